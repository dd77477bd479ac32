/**
 * The Bench view's checks panel: the board under test (its id typed, or scanned by a
 * keyboard-style barcode reader that types into the focused field and presses Enter), and the
 * run's board checks as the backend computes them, filling in as each value becomes
 * measurable. It only displays and asks; every value and verdict comes from the engine.
 */
import type { Api } from '../api';
import { h } from '../dom';
import { errorText, type ChecksView } from '../wire';

export interface PanelBoard {
  boardId: string | null;
  operator: string | null;
  firmware: string | null;
}

const RESULT_WORDS: Record<string, string> = {
  pass: 'pass',
  fail: 'FAIL',
  'not-measured': 'waiting',
};

export class ChecksPanel {
  readonly el = h('section', { class: 'checks-panel', 'aria-label': 'Board and checks' });
  private readonly boardInput = h('input', {
    id: 'board-id',
    type: 'text',
    autocomplete: 'off',
    spellcheck: 'false',
    maxlength: '64',
    placeholder: 'type or scan, then Enter',
  }) as HTMLInputElement;
  private readonly operatorInput = h('input', {
    id: 'board-operator',
    type: 'text',
    autocomplete: 'off',
    maxlength: '120',
  }) as HTMLInputElement;
  private readonly form: HTMLFormElement;
  private readonly boardLine = h('p', { class: 'checks-board quiet', 'aria-live': 'polite' });
  private readonly status = h('p', { class: 'checks-status', role: 'status' });
  private readonly body = h('div', { class: 'checks-body', 'aria-live': 'polite' });
  private stationId: string | null = null;

  constructor(private readonly api: Api) {
    this.form = h(
      'form',
      { class: 'board-form' },
      h('label', { for: 'board-id', class: 'field-label' }, 'Board id'),
      this.boardInput,
      h('label', { for: 'board-operator', class: 'field-label' }, 'Operator'),
      this.operatorInput,
      h('button', { type: 'submit', class: 'btn btn-small' }, 'Set board'),
    ) as HTMLFormElement;
    // A barcode reader ends with Enter, which submits the form like a typed entry.
    this.form.addEventListener('submit', (e) => {
      e.preventDefault();
      void this.submit();
    });
    this.el.append(this.form, this.boardLine, this.status, this.body);
  }

  /** A live station: the form is offered, the checks come from the `checks` push. */
  showLive(stationId: string, board: PanelBoard | undefined, checks: ChecksView | null): void {
    this.form.hidden = false;
    if (this.stationId !== stationId) {
      this.stationId = stationId;
      this.boardInput.value = '';
      this.status.textContent = '';
    }
    this.renderBoard(board);
    this.renderChecks(checks, 'live');
  }

  /** A recorded run: its stored identity and its checks (asked once when the run opens). */
  showRun(board: PanelBoard, checks: ChecksView | null): void {
    this.stationId = null;
    this.form.hidden = true;
    this.renderBoard(board);
    this.renderChecks(checks, 'run');
  }

  private async submit(): Promise<void> {
    const stationId = this.stationId;
    const boardId = this.boardInput.value.trim();
    if (!stationId) return;
    if (!/^[!-~]{1,64}$/.test(boardId)) {
      this.status.textContent = 'A board id is 1–64 characters without spaces; nothing was changed.';
      return;
    }
    const operator = this.operatorInput.value.trim();
    try {
      await this.api.request('stations.setBoard', {
        stationId,
        boardId,
        ...(operator ? { operator } : {}),
      });
      this.status.textContent = `Board ${boardId} set on this station.`;
      this.boardInput.value = '';
      this.boardInput.focus();
    } catch (err) {
      this.status.textContent = `The board id was not set: ${errorText(err)}`;
    }
  }

  private renderBoard(board: PanelBoard | undefined): void {
    const parts = [
      `Board ${board?.boardId ?? 'not set'}`,
      board?.operator ? `operator ${board.operator}` : null,
      board?.firmware ? `firmware ${board.firmware}` : null,
    ].filter((x): x is string => x !== null);
    this.boardLine.textContent = parts.join(' · ');
    this.boardLine.setAttribute('data-board', board?.boardId ?? '');
  }

  private renderChecks(checks: ChecksView | null, mode: 'live' | 'run'): void {
    if (!checks) {
      this.body.replaceChildren(
        h(
          'p',
          { class: 'quiet' },
          'No checks: the profile has no design values for the board (Connect & profile, “Design values of the board”).',
        ),
      );
      return;
    }
    const verdictWord =
      mode === 'live' && checks.verdict === 'incomplete' ? 'in progress' : checks.verdict.toUpperCase();
    const rows = checks.checks.map((c) =>
      h(
        'tr',
        { class: `check-${c.result}`, 'data-check': c.code, title: c.note },
        h('th', { scope: 'row' }, c.code),
        h('td', { class: 'num' }, c.measured === null ? '–' : `${c.measured}${c.unit ? ' ' + c.unit : ''}`),
        h('td', { class: 'num' }, `${c.min}–${c.max}`),
        h('td', {}, RESULT_WORDS[c.result] ?? c.result),
      ),
    );
    this.body.replaceChildren(
      h(
        'p',
        {
          class: `checks-verdict verdict-${checks.verdict}`,
          id: 'checks-verdict',
          'data-verdict': checks.verdict,
        },
        `Verdict: ${verdictWord}`,
      ),
      ...(checks.fault
        ? [h('p', { class: 'error-text' }, `The charger faulted (${checks.fault.what}): the run fails.`)]
        : []),
      h(
        'table',
        { class: 'checks-table' },
        h('caption', { class: 'sr-only' }, 'Board checks'),
        h(
          'thead',
          {},
          h('tr', {}, ...['Check', 'Value', 'Limits', 'Result'].map((c) => h('th', { scope: 'col' }, c))),
        ),
        h('tbody', {}, ...rows),
      ),
    );
  }
}

/** The small verdict badge of a Rack tile; null when the station has no checks. */
export function verdictBadge(checks: ChecksView | null): HTMLElement | null {
  if (!checks) return null;
  const word = checks.verdict === 'incomplete' ? 'checks running' : checks.verdict;
  return h(
    'span',
    { class: `tile-verdict verdict-${checks.verdict}`, 'data-verdict': checks.verdict },
    checks.board ? `${word} · ${checks.board}` : word,
  );
}
