/**
 * The report's own browser script, as plain JavaScript text: it reads the embedded run data
 * and draws one Chart.js chart per physical quantity, with the phases shaded and labelled.
 * The phase colours and the run-time format are the dashboard's own (shared/display), put
 * into the text when the report is built, so the report and the app cannot drift apart.
 */
import { PHASE_PALETTE } from '@shared/display/phase-palette';
import { formatRunTime } from '@shared/display/run-time';

const SHADE = Object.fromEntries(
  Object.entries(PHASE_PALETTE).map(([p, c]) => [p, c.wash.replace(/[\d.]+\)$/, '0.16)')]),
);
const INK = Object.fromEntries(Object.entries(PHASE_PALETTE).map(([p, c]) => [p, c.ink]));

export const REPORT_CHART_SCRIPT = String.raw`
(function () {
  'use strict';
  var data = JSON.parse(document.getElementById('run-data').textContent);
  var SHADE = ${JSON.stringify(SHADE)};
  var INK = ${JSON.stringify(INK)};
  var clock = ${formatRunTime.toString()};
  var phaseBands = {
    id: 'phaseBands',
    beforeDatasetsDraw: function (chart) {
      var a = chart.chartArea;
      var x = chart.scales.x;
      var ctx = chart.ctx;
      ctx.save();
      data.phases.forEach(function (p) {
        var x0 = Math.max(a.left, x.getPixelForValue(p.startT));
        var x1 = Math.min(a.right, x.getPixelForValue(p.endT));
        if (!(x1 > x0)) return;
        ctx.fillStyle = SHADE[p.phase] || 'rgba(0,0,0,0.05)';
        ctx.fillRect(x0, a.top, x1 - x0, a.bottom - a.top);
        if (x1 - x0 > 34) {
          ctx.fillStyle = INK[p.phase] || '#333';
          ctx.font = '600 10px sans-serif';
          ctx.fillText(p.phase, x0 + 3, a.top + 11);
        }
      });
      ctx.restore();
    }
  };
  var drawn = 0;
  data.charts.forEach(function (spec) {
    var canvas = document.getElementById(spec.id);
    if (!canvas) return;
    var scales = {
      x: {
        type: 'linear',
        min: data.startT,
        max: data.endT,
        title: { display: true, text: 'Run time [h:mm]' },
        ticks: { callback: function (v) { return clock(v); }, maxTicksLimit: 12 }
      }
    };
    spec.axes.forEach(function (axis, i) {
      scales[axis.id] = {
        type: 'linear',
        position: i === 0 ? 'left' : 'right',
        title: { display: true, text: axis.title },
        grid: { drawOnChartArea: i === 0 }
      };
    });
    var datasets = spec.series.map(function (s) {
      var points = [];
      for (var i = 0; i + 1 < s.xy.length; i += 2) points.push({ x: s.xy[i], y: s.xy[i + 1] });
      return {
        label: s.label,
        data: points,
        yAxisID: s.axis,
        borderColor: s.color,
        backgroundColor: s.color,
        borderDash: s.dash || [],
        borderWidth: 1.5,
        pointRadius: 0,
        spanGaps: false
      };
    });
    new Chart(canvas, {
      type: 'line',
      data: { datasets: datasets },
      options: {
        animation: false,
        normalized: true,
        parsing: false,
        responsive: true,
        maintainAspectRatio: false,
        devicePixelRatio: 2,
        interaction: { mode: 'nearest', axis: 'x', intersect: false },
        plugins: { legend: { display: true, position: 'top' }, title: { display: false } },
        scales: scales
      },
      plugins: [phaseBands]
    });
    canvas.setAttribute('data-rendered', 'true');
    drawn++;
  });
  document.body.setAttribute('data-charts-drawn', String(drawn));
})();
`;
