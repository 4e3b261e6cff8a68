// Judges a batch's readings against a cooling rule set. Pure: readings in, verdict out. The predictor's
// estimate only places a clock start that no reading captured; whether a stage is met is the readings' word.
import { limitIn, reheat, type Limit, type RuleSet, type Stage } from "~/lib/rule-sets";
import type { TemperatureUnit } from "~/lib/temperature";

export type ReadingKind = "reading" | "reheat";

export type RuleReading = {
  id: string;
  /** Epoch milliseconds. */
  takenAt: number;
  value: number;
  unit: TemperatureUnit;
  kind?: ReadingKind;
};

export type RuleInput = {
  /** In any order. */
  readings: readonly RuleReading[];
  batchStartedAt: number;
  siteUnit: TemperatureUnit;
  /** The predictor's estimate of when the food passed the upper limit, for a batch whose first reading came in below it. */
  clockStartEstimate?: number;
  now: number;
};

/**
 * measured: at a reading (the last at or above the upper limit, or the reheat reading);
 * estimated: the predictor's estimate; assumed: the batch start or the first reading, whichever is earlier.
 */
export type ClockStartBasis = "measured" | "estimated" | "assumed";
export type ClockStart = { at: number; basis: ClockStartBasis; readingId: string | null };

/** "stopped": the attempt ended with a reheat before this stage was decided. */
export type StageStatus = "met" | "missed" | "in-progress" | "not-started" | "stopped";

export type StageResult = {
  /** 1-based. */
  stage: number;
  /** The stage's limit in the site's unit, as the rule publishes it. */
  limit: { value: number; unit: TemperatureUnit };
  clockFrom: Stage["clockFrom"];
  clockStartedAt: number | null;
  deadline: number | null;
  status: StageStatus;
  /** The first reading at or below the limit, taken by the deadline. */
  metBy: string | null;
  /** The first reading at or below the limit, taken after the deadline. */
  reachedLateBy: string | null;
};

export type Outcome = "in-progress" | "passed" | "failed";
/** After a first failed attempt: reheat to 74 °C (165 °F) and cool again, or discard. After a second: discard. */
export type NextStep = "reheat" | "discard";

export type Attempt = {
  number: 1 | 2;
  /** The reheat reading that began this attempt. */
  reheatReadingId: string | null;
  clockStart: ClockStart | null;
  stages: StageResult[];
  outcome: Outcome;
  /** The earliest deadline passed without a meeting reading. */
  missedAt: number | null;
};

export type RuleFlag =
  | { kind: "startNotCaptured"; attempt: 1 | 2; firstReadingId: string; basis: "estimated" | "assumed" }
  | { kind: "estimateIgnored"; reason: "afterFirstReading" }
  | { kind: "reheatTooCool"; readingId: string; limit: { value: number; unit: TemperatureUnit } }
  | { kind: "reheatNotCounted"; readingId: string; reason: "noMissedStage" | "alreadyRestarted" }
  | { kind: "advisory"; attempt: 1 | 2; code: string; note: string }
  | { kind: "keepCooling"; attempt: 1 | 2; limit: { value: number; unit: TemperatureUnit } };

export type RuleEvaluation = {
  ruleSetCode: string;
  ruleSetVersion: number;
  outcome: Outcome;
  nextStep: NextStep | null;
  /** Of the current (last) attempt. */
  clockStart: ClockStart | null;
  stages: StageResult[];
  /** One, or two after a counted reheat; the last is the current one. */
  attempts: Attempt[];
  flags: RuleFlag[];
};

const MINUTE_MS = 60_000;

// Each reading is compared in its own unit with the figure the rule gives in that unit.
const atOrBelow = (r: RuleReading, l: Limit) => r.value <= limitIn(l, r.unit);
const atOrAbove = (r: RuleReading, l: Limit) => r.value >= limitIn(l, r.unit);
const shown = (l: Limit, unit: TemperatureUnit) => ({ value: limitIn(l, unit), unit });

/**
 * The clock starts at the last reading at or above the upper limit before the first one below. The
 * food passed the limit somewhere between those two readings; taking the earlier end is the earliest
 * the crossing can have been, so deadlines come no later than the real ones (a linear interpolation
 * would fall later and could grant time the food did not have).
 */
function findClockStart(
  ruleSet: RuleSet,
  sequence: RuleReading[],
  fallbackAt: number,
  estimate: number | undefined,
  attempt: 1 | 2,
  flags: RuleFlag[],
): ClockStart | null {
  if (ruleSet.clockStartsAt === "batch-start") {
    // A second attempt's sequence opens with its reheat reading, and its fallback is that reading's time.
    const at = Math.min(fallbackAt, sequence[0]?.takenAt ?? fallbackAt);
    return attempt === 2 ? { at, basis: "measured", readingId: sequence[0].id } : { at, basis: "assumed", readingId: null };
  }
  const upper = ruleSet.stages[0].from;
  const firstBelow = sequence.findIndex((r) => !atOrAbove(r, upper));
  if (firstBelow === -1) return null;
  if (firstBelow > 0) return { at: sequence[firstBelow - 1].takenAt, basis: "measured", readingId: sequence[firstBelow - 1].id };
  const first = sequence[0];
  if (estimate !== undefined && estimate > first.takenAt) flags.push({ kind: "estimateIgnored", reason: "afterFirstReading" });
  const usable = estimate !== undefined && estimate <= first.takenAt;
  flags.push({ kind: "startNotCaptured", attempt, firstReadingId: first.id, basis: usable ? "estimated" : "assumed" });
  if (usable) return { at: estimate, basis: "estimated", readingId: null };
  return { at: Math.min(fallbackAt, first.takenAt), basis: "assumed", readingId: null };
}

type AttemptInput = {
  number: 1 | 2;
  /** Cooling readings of the attempt in time order; a second attempt's opens with its reheat reading. */
  sequence: RuleReading[];
  /** The batch start, or the reheat time. */
  fallbackAt: number;
  estimate: number | undefined;
  siteUnit: TemperatureUnit;
  /** `now`, or the reheat time that ended the attempt. */
  until: number;
  closed: boolean;
  reheatReadingId: string | null;
};

function evaluateAttempt(ruleSet: RuleSet, a: AttemptInput, flags: RuleFlag[]): Attempt {
  const { number, sequence, siteUnit, until, closed, reheatReadingId } = a;
  const clockStart = findClockStart(ruleSet, sequence, a.fallbackAt, a.estimate, number, flags);
  const cooling = sequence.filter((r) => r.kind !== "reheat");
  const stages: StageResult[] = [];
  let previousMetAt: number | null = null;
  for (const [i, stage] of ruleSet.stages.entries()) {
    const clockStartedAt: number | null = stage.clockFrom === "start" ? (clockStart?.at ?? null) : previousMetAt;
    previousMetAt = null;
    const result: StageResult = {
      stage: i + 1,
      limit: shown(stage.to, siteUnit),
      clockFrom: stage.clockFrom,
      clockStartedAt,
      deadline: null,
      status: "not-started",
      metBy: null,
      reachedLateBy: null,
    };
    stages.push(result);
    if (clockStartedAt === null) continue;
    const deadline = clockStartedAt + stage.withinMinutes * MINUTE_MS;
    result.deadline = deadline;
    const reached: RuleReading | undefined = cooling.find((r) => r.takenAt >= clockStartedAt && atOrBelow(r, stage.to));
    if (reached && reached.takenAt <= deadline) {
      result.status = "met";
      result.metBy = reached.id;
      previousMetAt = reached.takenAt;
    } else if (reached) {
      result.status = "missed";
      result.reachedLateBy = reached.id;
    } else if (until > deadline) {
      result.status = "missed";
    } else {
      result.status = closed ? "stopped" : "in-progress";
    }
  }

  const missed = stages.filter((s) => s.status === "missed");
  const outcome: Outcome = missed.length > 0 ? "failed" : stages.every((s) => s.status === "met") ? "passed" : "in-progress";
  const missedAt = missed.length > 0 ? Math.min(...missed.map((s) => s.deadline!)) : null;

  if (clockStart) {
    const since = cooling.filter((r) => r.takenAt >= clockStart.at);
    for (const advisory of ruleSet.advisories) {
      const below = since.find((r) => atOrBelow(r, advisory.above));
      // USDA FSIS Appendix B, option 2: "more than" 1 h above, so exactly 1 h is not flagged.
      if ((below?.takenAt ?? until) - clockStart.at > advisory.forMinutes * MINUTE_MS)
        flags.push({ kind: "advisory", attempt: number, code: advisory.code, note: advisory.note });
    }
    const { continueTo } = ruleSet;
    if (outcome === "passed" && continueTo && !since.some((r) => atOrBelow(r, continueTo)))
      flags.push({ kind: "keepCooling", attempt: number, limit: shown(continueTo, siteUnit) });
  }

  return { number, reheatReadingId, clockStart, stages, outcome, missedAt };
}

const byTime = (a: RuleReading, b: RuleReading) => a.takenAt - b.takenAt || (a.id < b.id ? -1 : a.id > b.id ? 1 : 0);

/**
 * Evaluates a batch against a rule set, from its readings only. A stage is met by a reading at or below
 * its limit taken at or before its deadline; it is missed once `now` passes the deadline without one.
 * One reheat to 74 °C (165 °F) after a missed stage restarts the clocks (FDA Food Code 2022 §3-403.11).
 */
export function evaluateRuleSet(ruleSet: RuleSet, input: RuleInput): RuleEvaluation {
  const { batchStartedAt, siteUnit, clockStartEstimate, now } = input;
  const sorted = [...input.readings].sort(byTime);
  const cooling = sorted.filter((r) => r.kind !== "reheat");
  const flags: RuleFlag[] = [];

  // The first attempt, open until now or ended by the reheat taken at `endedAt`.
  const first = (endedAt: number | null): AttemptInput => ({
    number: 1,
    sequence: endedAt === null ? cooling : cooling.filter((c) => c.takenAt < endedAt),
    fallbackAt: batchStartedAt,
    estimate: clockStartEstimate,
    siteUnit,
    until: endedAt ?? now,
    closed: endedAt !== null,
    reheatReadingId: null,
  });

  let restart: RuleReading | null = null;
  for (const r of sorted.filter((r) => r.kind === "reheat")) {
    if (!atOrAbove(r, reheat.limit)) {
      flags.push({ kind: "reheatTooCool", readingId: r.id, limit: shown(reheat.limit, r.unit) });
    } else if (restart) {
      flags.push({ kind: "reheatNotCounted", readingId: r.id, reason: "alreadyRestarted" });
    } else if (evaluateAttempt(ruleSet, first(r.takenAt), []).missedAt !== null) {
      // The first attempt, judged as it stood when this reheat was taken, had already missed a stage.
      restart = r;
    } else {
      flags.push({ kind: "reheatNotCounted", readingId: r.id, reason: "noMissedStage" });
    }
  }

  const attempts: Attempt[] = [];
  if (restart) {
    const at = restart.takenAt;
    attempts.push(evaluateAttempt(ruleSet, first(at), flags));
    const sequence = [restart, ...cooling.filter((c) => c.takenAt >= at)];
    attempts.push(evaluateAttempt(ruleSet, { number: 2, sequence, fallbackAt: at, estimate: undefined, siteUnit, until: now, closed: false, reheatReadingId: restart.id }, flags));
  } else {
    attempts.push(evaluateAttempt(ruleSet, first(null), flags));
  }

  const current = attempts[attempts.length - 1];
  return {
    ruleSetCode: ruleSet.code,
    ruleSetVersion: ruleSet.version,
    outcome: current.outcome,
    nextStep: current.outcome !== "failed" ? null : current.number === 1 ? "reheat" : "discard",
    clockStart: current.clockStart,
    stages: current.stages,
    attempts,
    flags,
  };
}
