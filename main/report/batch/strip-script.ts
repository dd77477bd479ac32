/**
 * The batch report's browser script (plain JavaScript text): one strip plot per measured
 * value, a dot per board with the design limits drawn as lines, so a lot of parts at the edge
 * of tolerance shows as a shifted cluster before it shows as failures.
 */
export const BATCH_STRIP_SCRIPT = String.raw`
(function () {
  'use strict';
  var data = JSON.parse(document.getElementById('batch-data').textContent);
  data.strips.forEach(function (s) {
    var canvas = document.getElementById(s.id);
    if (!canvas) return;
    var n = s.points.length;
    var pts = function (result) {
      return s.points.filter(function (p) { return p.result === result; })
        .map(function (p) { return { x: p.x, y: p.y, board: p.board }; });
    };
    var limit = function (x) { return [{ x: x, y: -0.7 }, { x: x, y: n - 0.3 }]; };
    new Chart(canvas, {
      type: 'scatter',
      data: {
        datasets: [
          { label: 'pass', data: pts('pass'), pointStyle: 'circle', pointRadius: 5, backgroundColor: '#1d232a', borderColor: '#1d232a' },
          { label: 'fail', data: pts('fail'), pointStyle: 'crossRot', pointRadius: 8, borderWidth: 2, backgroundColor: '#a32020', borderColor: '#a32020' },
          { label: 'min ' + s.min, data: limit(s.min), showLine: true, pointRadius: 0, borderColor: '#56606b', borderDash: [6, 4], borderWidth: 1.5 },
          { label: 'max ' + s.max, data: limit(s.max), showLine: true, pointRadius: 0, borderColor: '#56606b', borderDash: [6, 4], borderWidth: 1.5 }
        ]
      },
      options: {
        animation: false,
        responsive: true,
        maintainAspectRatio: false,
        plugins: {
          legend: { position: 'bottom' },
          tooltip: { callbacks: { label: function (c) { return (c.raw.board || '') + ' ' + c.raw.x + (s.unit ? ' ' + s.unit : ''); } } }
        },
        scales: {
          x: { type: 'linear', title: { display: true, text: s.title }, suggestedMin: s.axisMin, suggestedMax: s.axisMax },
          y: {
            type: 'linear', min: -0.7, max: n - 0.3, reverse: true,
            // One tick per board, at its row (the axis runs half a row past each end).
            afterBuildTicks: function (axis) { axis.ticks = s.boards.map(function (_, i) { return { value: i }; }); },
            ticks: { autoSkip: false, font: { size: 10 }, callback: function (v) { return s.boards[v]; } },
            grid: { display: false }
          }
        }
      }
    });
  });
  document.body.setAttribute('data-charts-ready', String(data.strips.length));
})();
`;
