/** The phase legend in words: hatch swatch + phase name (colour is never the only signal). */
import { PHASES } from '@shared/engine/types';
import { h } from '../dom';
import { phaseWords } from '../format';
import { PHASE_STYLES, hatchSwatch } from '../charts/phase-style';

export function phaseLegend(chemistry?: string): HTMLElement {
  const list = h('ul', { class: 'phase-legend', 'aria-label': 'Phase shading behind the charts' });
  for (const phase of PHASES) {
    const swatch = hatchSwatch(phase);
    swatch.setAttribute('aria-hidden', 'true');
    list.append(
      h(
        'li',
        { title: `${phaseWords(phase, chemistry)}: ${PHASE_STYLES[phase].hatchWords}` },
        swatch,
        h('span', {}, phaseWords(phase, chemistry)),
      ),
    );
  }
  return list;
}
