/**
 * The run engine: samples in, phase / alarm / gap events and state out (docs/codes.md).
 * It composes the phase machine, the alarm book and the metrics; the per-sample path works on
 * numbers in place and allocates only the events it returns.
 */
import type { ResolvedProfile } from '../chemistry/types';
import { thermistorTemperature } from '../chemistry/thermistor';
import {
  contactMessage,
  faultPinMessage,
  inputLowMessage,
  overtempMessage,
  overvoltageMessage,
  preconditionFaultMessage,
  preconditionTimeoutMessage,
  reverseCurrentMessage,
  sensorFaultMessage,
  silenceMessage,
  stallMessage,
  timerMessage,
  undertempMessage,
} from './alarm-messages';
import {
  ALARM_INDEX,
  ALARM_RULES,
  AlarmBook,
  CLEAR as CLEARED,
  KEEP as KEPT,
  RAISE as RAISED,
} from './alarms';
import {
  CONTACT_NONE as SEEN_NONE,
  CONTACT_OPENING as SEEN_OPENING,
  ContactWatch,
  contactLimits,
} from './contact-watch';
import { deriveLimits, type EngineLimits } from './limits';
import { EnergyCounter, MpptTracking, SocEstimator, StepResistance, TaperModel } from './metrics';
import {
  CC as CC_CODE,
  CV as CV_CODE,
  DONE as DONE_CODE,
  FAULT as FAULT_CODE,
  IDLE as IDLE_CODE,
  PRECONDITION as PRECONDITION_CODE,
  isChargingCode as isChargingCodeImport,
} from './phase-codes';
import { PhaseMachine } from './phase-machine';
import { ProgressTracker } from './progress';
import { SampleView, SRC_PANEL as PANEL, SRC_UNKNOWN as UNKNOWN } from './sample-view';
import {
  ALARM_CODES,
  PHASES,
  type AlarmEvent,
  type AlarmLevel,
  type EngineEvent,
  type Phase,
  type RunEngine,
  type RunMetrics,
  type RunState,
  type RunSummary,
  type TimedSample,
} from './types';

// Module-local copies: under CommonJS interop (tests, tsx) an imported binding is read through
// a getter on every use, which the per-sample path should not pay.
const KEEP = KEPT;
const CLEAR = CLEARED;
const RAISE = RAISED;
const SRC_PANEL = PANEL;
const SRC_UNKNOWN = UNKNOWN;
const CONTACT_NONE = SEEN_NONE;
const CONTACT_OPENING = SEEN_OPENING;
const PRECONDITION = PRECONDITION_CODE;
const CC = CC_CODE;
const CV = CV_CODE;
const DONE = DONE_CODE;
const FAULT = FAULT_CODE;
const IDLE = IDLE_CODE;
const isChargingCode = isChargingCodeImport;

/** Returned when nothing happened. Shared and frozen: callers must not push into it. */
const NO_EVENTS: EngineEvent[] = Object.freeze([]) as unknown as EngineEvent[];

const OVERTEMP = ALARM_INDEX.overtemp;
const UNDERTEMP = ALARM_INDEX.undertemp;
const OVERVOLTAGE = ALARM_INDEX.overvoltage;
const STALL = ALARM_INDEX.stall;
const PRECONDITION_TIMEOUT = ALARM_INDEX['precondition-timeout'];
const TIMER = ALARM_INDEX.timer;
const INPUT_LOW = ALARM_INDEX['input-low'];
const SILENCE = ALARM_INDEX.silence;
const FAULT_PIN = ALARM_INDEX['fault-pin'];
const REVERSE_CURRENT = ALARM_INDEX['reverse-current'];
const SENSOR_FAULT = ALARM_INDEX['sensor-fault'];
const CONTACT = ALARM_INDEX.contact;
/** Raised, these stop the charge: the phase shows `fault`. */
const STOPPING_ALARMS = (1 << FAULT_PIN) | (1 << PRECONDITION_TIMEOUT) | (1 << TIMER);

/** Contact evidence within a minute of the last is the same episode (one opening can also step the voltage). */
const CONTACT_EPISODE_S = 60;
/** `contact` is raised (warn) at 2 episodes within 15 min, and clears after 15 quiet minutes (common practice). */
const CONTACT_WARN_WINDOW_S = 900;
const CONTACT_WARN_EPISODES = 2;
/** ...and becomes critical at 3 episodes within 10 min: it keeps repeating (common practice). */
const CONTACT_CRITICAL_WINDOW_S = 600;
const CONTACT_CRITICAL_EPISODES = 3;
/** A warning escalates to critical after its critical condition held this long (the 3 s sensor-noise filter). */
const ESCALATE_AFTER_S = 3;

/** A time figure shown to a person: finite and not negative, else unknown. */
function seconds(s: number | null): number | null {
  if (s === null || !Number.isFinite(s)) return null;
  return s < 0 ? 0 : s;
}

export function createRunEngine(profile: ResolvedProfile): RunEngine {
  return new Engine(profile);
}

class Engine implements RunEngine {
  private readonly lim: EngineLimits;
  private readonly view: SampleView;
  private readonly machine: PhaseMachine;
  private readonly book = new AlarmBook();
  private readonly energy = new EnergyCounter();
  private readonly resistance: StepResistance;
  private readonly mppt = new MpptTracking();
  private readonly taper = new TaperModel();
  private readonly soc: SocEstimator;
  private readonly progress: ProgressTracker;
  private readonly phaseS = new Float64Array(PHASES.length);

  private started = false;
  private firstT = 0;
  private lastT = 0;
  private last: TimedSample | null = null;
  private prevIbatA = NaN;
  private prevVbatV = NaN;
  private prevVinV = NaN;
  private prevIinA = NaN;

  /** The phase shown (the machine's, or fault), as a code (phase-codes.ts). */
  private phaseCode = IDLE;
  private phaseSinceT = 0;
  /** The first sample always announces its phase. */
  private hasPhaseEvent = false;
  /** Time in precondition / in charging phases, for the precondition timeout and the safety timer. */
  private preconditionS = 0;
  private chargeS = 0;
  private stalledS = 0;

  private gapOpen = false;
  private gapStartT = NaN;
  private gapReason = '';
  private lastClosedGapStartT = NaN;
  private lastClosedGapEndT = NaN;
  /** The next interval between samples spans an interruption: do not integrate or judge it. */
  private bridgeNext = false;

  private out: EngineEvent[] | null = null;

  private readonly contact: ContactWatch;
  /** Start times of the recent contact episodes (oldest first). */
  private readonly contactEpisodes: number[] = [];
  private contactOpenings = 0;
  private contactSteps = 0;
  /** Neighbours further apart than this are not compared for contact evidence: 3 typical intervals, at least 5 s. */
  private contactMaxDtS = 5;
  private overtempCriticalSinceT = NaN;
  /** Why temperature protection is blind (empty when it is not), set per sample or by blindSensor. */
  private blindDetail = '';

  constructor(private readonly profile: ResolvedProfile) {
    this.lim = deriveLimits(profile);
    this.view = new SampleView(profile.cells);
    this.machine = new PhaseMachine(this.lim);
    this.resistance = new StepResistance(this.lim.irStepA, this.lim.irMaxDtS);
    this.soc = new SocEstimator(this.lim.capacityAh, this.lim.capacityKnown);
    this.progress = new ProgressTracker(this.lim.stallRiseVPerCell, this.lim.stallRiseAh);
    this.contact = new ContactWatch(contactLimits(profile));
  }

  push(sample: TimedSample): EngineEvent[] {
    this.out = null;
    const v = this.view;
    v.fill(sample);
    // Time never runs backwards inside the engine (the time base already ensures it; this guards misuse).
    if (this.started && !(sample.t >= this.lastT)) v.t = this.lastT;
    const t = v.t;
    const lim = this.lim;
    if (!this.started) {
      this.started = true;
      this.firstT = t;
      this.lastT = t;
      this.bridgeNext = false;
    } else {
      const dtS = t > this.lastT ? t - this.lastT : 0;
      if (this.bridgeNext) {
        // The interval over a reported interruption. A line placed with no elapsed time (a time
        // glitch) does not cross it yet: the bridge waits for the first line that moves on.
        if (dtS > 0) this.bridgeNext = false;
        this.progress.restart();
        this.contact.reset();
      } else if (dtS > lim.silenceS) {
        // A gap: no accepted line for longer than silenceS. Nothing is integrated across it (charge,
        // energy, phase time, timers). Replays do not tick: the hole is a silence of its own too.
        if (!this.book.isActive(SILENCE)) {
          this.raise(SILENCE, this.lastT + lim.silenceS, silenceMessage(dtS, lim.silenceS));
        }
        this.emit({
          type: 'gap',
          t: this.lastT,
          endT: t,
          durationS: dtS,
          reason: `no accepted telemetry line for ${Math.round(dtS)} s`,
        });
        this.progress.restart();
        this.contact.reset();
      } else {
        this.accumulate(dtS);
      }
      if (this.book.isActive(SILENCE)) this.clear(SILENCE, t);
    }
    this.lastT = t;
    this.last = sample;

    const machine = this.machine;
    const entered = machine.update(v);
    const underlying = machine.code;
    this.taper.update(t, v.ibatA, underlying === CV);
    if (underlying === PRECONDITION) this.soc.anchorEmpty(this.energy.ah);
    if (entered === DONE) this.soc.anchorFull(this.energy.ah);
    // The clocks pause while nothing charges (a night, a cloud) and restart only when their
    // stage is over: precondition when the pack leaves it, the safety timer at termination.
    if (underlying === CC || underlying === CV || underlying === DONE) this.preconditionS = 0;
    if (underlying === DONE) this.chargeS = 0;

    this.blindDetail = this.blindFrom(v, sample);
    this.evaluateAlarms(t);

    const shown = this.book.anyActive(STOPPING_ALARMS) ? FAULT : underlying;
    if (shown !== this.phaseCode || !this.hasPhaseEvent) this.setPhase(shown, t);
    this.prevIbatA = v.ibatA;
    this.prevVbatV = v.vbatV;
    this.prevVinV = v.vinV;
    this.prevIinA = v.iinA;
    return this.out ?? NO_EVENTS;
  }

  private setPhase(code: number, t: number): void {
    this.hasPhaseEvent = true;
    this.phaseCode = code;
    this.phaseSinceT = t;
    this.emit({ type: 'phase', t, phase: PHASES[code] });
  }

  /** Charge, energy and clocks over the interval since the previous sample. */
  private accumulate(dtS: number): void {
    const v = this.view;
    this.energy.add(
      dtS,
      this.prevIbatA,
      v.ibatA,
      this.prevVbatV,
      v.vbatV,
      this.prevVinV,
      v.vinV,
      this.prevIinA,
      v.iinA,
    );
    this.resistance.add(dtS, this.prevVbatV, v.vbatV, this.prevIbatA, v.ibatA);
    this.phaseS[this.phaseCode] += dtS;
    // Charging time counts while current flows (or is not reported), like a charger whose timers
    // pause while its input is too weak to deliver anything.
    const underlying = this.machine.code;
    if (isChargingCode(underlying) && !(this.prevIbatA < this.lim.flowOffA)) {
      this.chargeS += dtS;
      if (underlying === PRECONDITION) this.preconditionS += dtS;
    }
    const setpointV = this.lim.inputSetpointV;
    if (
      setpointV !== null &&
      isChargingCode(this.phaseCode) &&
      (v.src === SRC_PANEL || v.src === SRC_UNKNOWN)
    ) {
      this.mppt.add(dtS, v.vinV, setpointV);
    }
  }

  /**
   * Every alarm's conditions for this sample. An alarm goes through the book only when the book
   * needs it (AlarmBook.needsStep: its raising condition holds, or it is raised or pending);
   * its clearing condition is worked out only then.
   */
  private evaluateAlarms(t: number): void {
    const v = this.view;
    const lim = this.lim;
    const book = this.book;
    const underlying = this.machine.code;
    const currentA = v.ibatA;
    const charging = isChargingCode(underlying) || currentA >= lim.flowOnA;
    const tempC = v.tempC;
    const vPerCell = v.vPerCell;

    const faultPin = v.flt === 1;
    if (book.needsStep(FAULT_PIN, faultPin))
      this.act(FAULT_PIN, t, book.step(FAULT_PIN, t, faultPin, v.flt === 0));

    const preconditionStuck =
      underlying === PRECONDITION && (this.preconditionS >= lim.preconditionTimeoutS || v.flt === 1);
    if (book.needsStep(PRECONDITION_TIMEOUT, preconditionStuck)) {
      const left = underlying === CC || underlying === CV || underlying === DONE;
      this.act(PRECONDITION_TIMEOUT, t, book.step(PRECONDITION_TIMEOUT, t, preconditionStuck, left));
    }

    const timerS = lim.timerS;
    if (timerS !== null) {
      const expired = this.chargeS >= timerS && underlying !== DONE;
      if (book.needsStep(TIMER, expired)) {
        const over = underlying === DONE || this.chargeS < timerS;
        this.act(TIMER, t, book.step(TIMER, t, expired, over));
      }
    }

    const hot = charging && tempC > lim.tempHighC;
    if (book.needsStep(OVERTEMP, hot))
      this.act(OVERTEMP, t, book.step(OVERTEMP, t, hot, tempC <= lim.tempHighC - lim.tempHysteresisC));
    // Over the window but under the cut-off is a warning (NiMH); past the cut-off it becomes critical.
    const overtemp = book.get(OVERTEMP);
    if (overtemp !== null && overtemp.level === 'warn' && charging && tempC > lim.tempCutoffC) {
      if (this.overtempCriticalSinceT !== this.overtempCriticalSinceT) this.overtempCriticalSinceT = t;
      if (t - this.overtempCriticalSinceT >= ESCALATE_AFTER_S) {
        this.overtempCriticalSinceT = NaN;
        this.raise(OVERTEMP, t, overtempMessage(tempC, lim.tempHighC, lim.tempCutoffC), 'critical');
      }
    } else if (this.overtempCriticalSinceT === this.overtempCriticalSinceT) this.overtempCriticalSinceT = NaN;

    const cold = charging && tempC < lim.tempLowC;
    if (book.needsStep(UNDERTEMP, cold))
      this.act(UNDERTEMP, t, book.step(UNDERTEMP, t, cold, tempC >= lim.tempLowC + lim.tempHysteresisC));

    const shiftV = this.overvoltageShiftV(tempC);
    const over = vPerCell > lim.overvoltageVPerCell + shiftV;
    if (book.needsStep(OVERVOLTAGE, over))
      this.act(
        OVERVOLTAGE,
        t,
        book.step(OVERVOLTAGE, t, over, vPerCell < lim.overvoltageClearVPerCell + shiftV),
      );

    // Blind while charging; a charger that stops because of the blind sensor does not end the episode.
    const blind = this.blindDetail !== '';
    const blindCharging = blind && (charging || book.isPending(SENSOR_FAULT));
    if (book.needsStep(SENSOR_FAULT, blindCharging))
      this.act(SENSOR_FAULT, t, book.step(SENSOR_FAULT, t, blindCharging, !blind && tempC === tempC));

    this.watchContact(t, charging);

    const vinV = v.vinV;
    if (vinV === vinV) {
      const notDone = underlying !== DONE;
      const sp = lim.inputSetpointV;
      const low = notDone && ((sp !== null && vinV <= sp * (1 + lim.inputAtFraction)) || vinV < v.vbatV);
      if (book.needsStep(INPUT_LOW, low)) {
        const recovered =
          (sp === null || vinV > sp * (1 + lim.inputClearFraction)) && !(vinV < v.vbatV * 1.01);
        this.act(INPUT_LOW, t, book.step(INPUT_LOW, t, low, !notDone || recovered));
      }
    } else if (book.needsStep(INPUT_LOW, false)) {
      book.step(INPUT_LOW, t, false, false); // no source data: never raised from missing data
    }

    if (currentA === currentA) {
      const present = v.sourcePresent();
      const reverse = currentA < -lim.reverseA && present;
      if (book.needsStep(REVERSE_CURRENT, reverse)) {
        const stopped = currentA >= -0.5 * lim.reverseA || !present;
        this.act(REVERSE_CURRENT, t, book.step(REVERSE_CURRENT, t, reverse, stopped));
      }
    }

    const shouldFlow = isChargingCode(underlying) && this.phaseCode !== FAULT;
    this.progress.update(t, vPerCell, this.energy.ah, shouldFlow);
    const stalledS = this.progress.stalledS;
    this.stalledS = stalledS;
    const stalled = stalledS >= lim.stallS;
    if (book.needsStep(STALL, stalled))
      this.act(STALL, t, book.step(STALL, t, stalled, stalledS < lim.stallS));
  }

  /** Carry out what the alarm book decided for alarm i. */
  private act(i: number, t: number, decision: number): void {
    if (decision === KEEP) return;
    if (decision === CLEAR) {
      this.clear(i, t);
      return;
    }
    if (decision === RAISE) this.raise(i, t, this.messageFor(i));
  }

  private messageFor(i: number): string {
    const v = this.view;
    const p = this.profile;
    const lim = this.lim;
    switch (i) {
      case OVERTEMP:
        return overtempMessage(v.tempC, lim.tempHighC, lim.tempCutoffC);
      case UNDERTEMP:
        return undertempMessage(v.tempC, lim.tempLowC, p);
      case OVERVOLTAGE:
        return overvoltageMessage(
          v.vbatV,
          p,
          lim.overvoltageVPerCell + this.overvoltageShiftV(v.tempC),
          v.tempC,
        );
      case STALL:
        return stallMessage(
          this.stalledS,
          this.progress.filteredVPerCell(),
          this.progress.ahSinceProgress(this.energy.ah),
          this.machine.phase,
          p,
        );
      case PRECONDITION_TIMEOUT:
        return this.preconditionS < lim.preconditionTimeoutS
          ? preconditionFaultMessage(v.vPerCell, p)
          : preconditionTimeoutMessage(this.preconditionS, v.vPerCell, p);
      case TIMER:
        return timerMessage(this.chargeS, v.ibatA, p);
      case INPUT_LOW:
        return inputLowMessage(v.vinV, v.vbatV, lim.inputSetpointV);
      case FAULT_PIN:
        return faultPinMessage(v.vbatV, v.ibatA, v.tempC);
      case REVERSE_CURRENT:
        return reverseCurrentMessage(v.ibatA, lim.reverseA);
      case SENSOR_FAULT:
        return sensorFaultMessage(this.blindDetail);
      default:
        // silence builds its message where it is raised (it needs the quiet time).
        return silenceMessage(0, lim.silenceS);
    }
  }

  /** Lead-acid: the overvoltage limit follows the set points' temperature compensation (BU-403; Trojan gel). */
  private overvoltageShiftV(tempC: number): number {
    const comp = this.lim.tempCompVPerCPerCell;
    return comp !== null && tempC === tempC ? comp * (tempC - 25) : 0;
  }

  /** Overtemp: a warning under the cut-off (NiMH's window top), critical past it. */
  private overtempLevel(tempC: number): AlarmLevel | undefined {
    return tempC > this.lim.tempCutoffC ? 'critical' : 'warn';
  }

  /** Temperature protection is blind: a thermistor reading with no temperature (rail, beyond full scale). */
  private blindFrom(v: SampleView, sample: TimedSample): string {
    if (v.ntcRaw !== v.ntcRaw || v.tempC === v.tempC) return '';
    const model = this.profile.thermistor;
    if (model === undefined) return '';
    const why = thermistorTemperature(model, v.ntcRaw);
    const raw = `ntc=${sample.ntcRaw}`;
    if (why.ok) return ''; // converted after all (the parser read it as ohms): not blind
    switch (why.reason) {
      case 'open':
        return `${raw} reads at the ADC rail: the thermistor is open (a broken wire or connector)`;
      case 'short':
        return `${raw} reads at the ADC rail: the thermistor is shorted`;
      case 'bad-model':
        return `${raw} cannot be converted: the profile's thermistor model is not valid`;
      default:
        return `${raw} is beyond the ADC's full scale or the thermistor curve`;
    }
  }

  /** Contact evidence from the shared detector; raise, escalate and clear `contact`. */
  private watchContact(t: number, charging: boolean): void {
    const v = this.view;
    const seen = this.contact.feed(t, v.vbatV, v.ibatA, this.contactMaxDtS, v.sourceAbsent());
    const episodes = this.contactEpisodes;
    if (seen !== CONTACT_NONE && charging) {
      if (seen === CONTACT_OPENING) this.contactOpenings++;
      else this.contactSteps++;
      const last = episodes.length ? episodes[episodes.length - 1] : -Infinity;
      if (t - last > CONTACT_EPISODE_S) episodes.push(t);
    }
    while (episodes.length && t - episodes[0] > CONTACT_WARN_WINDOW_S) episodes.shift();
    const active = this.book.get(CONTACT);
    if (episodes.length === 0) {
      if (active !== null) this.clear(CONTACT, t);
      this.contactOpenings = 0;
      this.contactSteps = 0;
      return;
    }
    if (seen === CONTACT_NONE || !charging) return;
    let recent = 0;
    for (const e of episodes) if (t - e <= CONTACT_CRITICAL_WINDOW_S) recent++;
    const critical = recent >= CONTACT_CRITICAL_EPISODES;
    if (active === null ? episodes.length >= CONTACT_WARN_EPISODES : critical && active.level === 'warn') {
      const windowS = Math.min(CONTACT_WARN_WINDOW_S, Math.max(60, t - episodes[0]));
      this.raise(
        CONTACT,
        t,
        contactMessage(this.contactOpenings, this.contactSteps, windowS, t, critical),
        critical ? 'critical' : 'warn',
      );
    }
  }

  private raise(i: number, t: number, message: string, level?: AlarmLevel): void {
    const code = ALARM_CODES[i];
    const lvl = level ?? (i === OVERTEMP ? this.overtempLevel(this.view.tempC) : ALARM_RULES[code].level);
    const event: AlarmEvent = { type: 'alarm', t, code, level: lvl as AlarmLevel, message };
    this.book.raised(i, event);
    this.emit(event);
  }

  private clear(i: number, t: number): void {
    this.book.cleared(i);
    this.emit({ type: 'alarm-clear', t, code: ALARM_CODES[i] });
  }

  private emit(event: EngineEvent): void {
    if (this.out === null) this.out = [event];
    else this.out.push(event);
  }

  blindSensor(t: number, detail: string): EngineEvent[] {
    if (!this.started) return NO_EVENTS;
    this.out = null;
    const at = t > this.lastT ? t : this.lastT;
    const charging = isChargingCode(this.machine.code) || this.view.ibatA >= this.lim.flowOnA;
    this.blindDetail = detail;
    const book = this.book;
    this.act(SENSOR_FAULT, at, book.step(SENSOR_FAULT, at, charging || book.isPending(SENSOR_FAULT), false));
    return this.out ?? NO_EVENTS;
  }

  setTypicalInterval(intervalS: number): void {
    if (intervalS > 0 && Number.isFinite(intervalS)) this.contactMaxDtS = Math.max(5, 3 * intervalS);
  }

  tick(t: number): EngineEvent[] {
    if (!this.started) return NO_EVENTS;
    // An interruption the shell reported, with no sample since: it is a gap, not a silence.
    if (this.gapOpen && this.lastT <= this.gapStartT) return NO_EVENTS;
    const quietS = t - this.lastT;
    if (!(quietS > this.lim.silenceS) || this.book.isActive(SILENCE)) return NO_EVENTS;
    this.out = null;
    this.raise(SILENCE, t, silenceMessage(quietS, this.lim.silenceS));
    return this.out ?? NO_EVENTS;
  }

  gap(startT: number, endT: number | null, reason: string): EngineEvent[] {
    this.out = null;
    if (endT === null) {
      if (this.gapOpen) return NO_EVENTS;
      this.gapOpen = true;
      this.gapStartT = startT;
      this.gapReason = reason;
      this.bridgeNext = this.started;
      this.emit({ type: 'gap', t: startT, endT: null, reason });
      return this.out ?? NO_EVENTS;
    }
    if (this.gapOpen) {
      this.gapOpen = false;
      const from = this.gapStartT;
      this.lastClosedGapStartT = from;
      this.lastClosedGapEndT = endT;
      // Bridge only when no sample arrived since the interruption began.
      this.bridgeNext = this.started && this.lastT <= from;
      this.emit({ type: 'gap', t: from, endT, durationS: endT - from, reason: reason || this.gapReason });
      return this.out ?? NO_EVENTS;
    }
    if (startT === this.lastClosedGapStartT && endT === this.lastClosedGapEndT) return NO_EVENTS;
    this.lastClosedGapStartT = startT;
    this.lastClosedGapEndT = endT;
    this.bridgeNext = this.started && this.lastT <= startT;
    this.emit({ type: 'gap', t: startT, endT, durationS: endT - startT, reason });
    return this.out ?? NO_EVENTS;
  }

  state(): RunState {
    return {
      t: this.lastT,
      phase: PHASES[this.phaseCode],
      phaseSinceT: this.phaseSinceT,
      last: this.last,
      metrics: this.metrics(),
      activeAlarms: this.book.list(),
    };
  }

  private metrics(): RunMetrics {
    const energy = this.energy;
    const ir = this.resistance.ohm;
    const eta = this.eta();
    return {
      ah: energy.ah,
      wh: energy.wh,
      sourceWh: energy.sourceWhOrNull(),
      efficiency: energy.efficiency(),
      socPct: this.soc.pct(energy.ah),
      etaS: seconds(eta[0]),
      etaCcS: seconds(eta[1]),
      etaCvS: seconds(eta[2]),
      internalResistanceOhm: ir === ir ? ir : null,
      mpptErrorFraction: this.lim.inputSetpointV === null ? null : this.mppt.fraction(),
    };
  }

  /** [total, CC part, CV part] seconds to full; null where unknown. */
  private eta(): [number | null, number | null, number | null] {
    const lim = this.lim;
    const phase = this.phaseCode;
    if (phase === DONE) return [0, 0, 0];
    const currentA = this.taper.currentA();
    if (phase === CV) {
      const cvS = this.taper.taperS(currentA, lim.terminationA);
      return cvS === cvS ? [cvS, 0, cvS] : [null, 0, null];
    }
    if (phase !== CC || !(currentA >= lim.flowOnA)) return [null, null, null];
    const socPct = this.soc.pct(this.energy.ah);
    if (socPct === null) return [null, null, null];
    const remainingAh = (lim.capacityAh * (100 - socPct)) / 100;
    if (!lim.hasCv) {
      const ccS = (remainingAh * 3600) / currentA;
      return [ccS, ccS, 0];
    }
    // With a taper learned earlier in this run, the CV part and the charge it still delivers
    // come from the model; without one, all remaining charge is counted at the present current.
    const cvS = this.taper.taperS(lim.setA, lim.terminationA);
    const cvAh = this.taper.taperAh(lim.setA, lim.terminationA);
    const ccAh = cvAh === cvAh ? Math.max(0, remainingAh - cvAh) : remainingAh;
    const ccS = (ccAh * 3600) / currentA;
    return cvS === cvS ? [ccS + cvS, ccS, cvS] : [ccS, ccS, null];
  }

  summary(): Omit<RunSummary, 'lines' | 'rejected' | 'timeGlitches' | 'clockResets'> {
    const phaseS: Partial<Record<Phase, number>> = {};
    for (let i = 0; i < PHASES.length; i++) if (this.phaseS[i] > 0) phaseS[PHASES[i]] = this.phaseS[i];
    return { durationS: this.lastT - this.firstT, ah: this.energy.ah, wh: this.energy.wh, phaseS };
  }
}
