/** Which view is open, and with what: the one place views ask to switch. */
export type ViewName = 'bench' | 'rack' | 'runs' | 'feed' | 'connect' | 'diagnosis' | 'sweep';
export const VIEW_ORDER: readonly ViewName[] = [
  'bench',
  'rack',
  'runs',
  'feed',
  'connect',
  'diagnosis',
  'sweep',
];

export type ViewTarget =
  | { view: 'bench'; stationId?: string; runId?: number }
  | { view: 'rack' }
  | { view: 'runs' }
  | { view: 'feed'; stationId?: string; samplesBack?: number; aroundLabel?: string }
  | { view: 'connect'; stationId?: string }
  | { view: 'diagnosis'; stationId?: string; runId?: number; atT?: number }
  | { view: 'sweep'; stationId?: string };

export interface View {
  /** Called when the view opens (again), with what it should show. */
  show(target: ViewTarget): void;
  hide(): void;
}

export interface Navigator {
  open(target: ViewTarget): void;
  current(): ViewName;
}
