/**
 * Learning-rate schedules as a factor η_t on the optimiser's base rate (common practice), with an optional linear
 * warm-up: for step t (counted from 0) below `warmup`, η_t = (t + 1) / warmup × the schedule's factor at step 0.
 * After warm-up, with s = t − warmup:
 *   constant     1
 *   step         γ^⌊s / every⌋
 *   exponential  γ^(s / every)
 *   cosine       floor + (1 − floor)·(1 + cos(π·min(s, span)/span)) / 2, span = total − warmup
 *                (Loshchilov & Hutter 2017, "SGDR: stochastic gradient descent with warm restarts", eq. 5,
 *                without restarts)
 */
import { fail } from '@weft/core';

/** A learning-rate schedule as plain data (see the formulas at the top of this module). */
export type ScheduleDescription =
  | {
      /** The base rate throughout (after any warm-up). */
      readonly kind: 'constant';
      /** Steps of linear warm-up from rate/warmup to the full rate; default 0. */
      readonly warmup?: number;
    }
  | {
      /** The rate times `factor` every `every` steps, in whole drops. */
      readonly kind: 'step';
      /** Steps between drops. */
      readonly every: number;
      /** γ, the factor of each drop (0.5 halves the rate). */
      readonly factor: number;
      /** Steps of linear warm-up before the schedule starts; default 0. */
      readonly warmup?: number;
    }
  | {
      /** The rate times `factor` per `every` steps, smoothly: γ^(s / every). */
      readonly kind: 'exponential';
      /** Steps over which the rate falls by `factor`. */
      readonly every: number;
      /** γ, the factor per `every` steps. */
      readonly factor: number;
      /** Steps of linear warm-up before the schedule starts; default 0. */
      readonly warmup?: number;
    }
  | {
      /** Half a cosine from the full rate down to `floor` × the rate, over the run (Loshchilov & Hutter 2017). */
      readonly kind: 'cosine';
      /** The run's length in steps (warm-up included). */
      readonly total: number;
      /** The factor at the end, in [0, 1]; default 0. */
      readonly floor?: number;
      /** Steps of linear warm-up before the cosine starts; default 0. */
      readonly warmup?: number;
    };

/** Checks a schedule's fields (kinds, whole numbers, ranges), throwing a `WeftError` naming the field; returns it. */
export function checkSchedule(schedule: ScheduleDescription): ScheduleDescription {
  const warmup = schedule.warmup ?? 0;
  if (!Number.isInteger(warmup) || warmup < 0) fail('invalid_option', 'schedule.warmup', 'a whole number ≥ 0', String(warmup));
  switch (schedule.kind) {
    case 'constant':
      break;
    case 'step':
    case 'exponential':
      if (!Number.isInteger(schedule.every) || schedule.every < 1) fail('invalid_option', 'schedule.every', 'a whole number ≥ 1', String(schedule.every));
      if (!(schedule.factor > 0 && schedule.factor <= 1)) fail('invalid_option', 'schedule.factor', 'a number in (0, 1]', String(schedule.factor));
      break;
    case 'cosine':
      if (!Number.isInteger(schedule.total) || schedule.total <= warmup)
        fail('invalid_option', 'schedule.total', `a whole number > warmup (${warmup})`, String(schedule.total));
      if (schedule.floor !== undefined && !(schedule.floor >= 0 && schedule.floor <= 1))
        fail('invalid_option', 'schedule.floor', 'a number in [0, 1]', String(schedule.floor));
      break;
    default:
      fail('invalid_option', 'schedule.kind', "'constant', 'step', 'exponential' or 'cosine'", JSON.stringify((schedule as { kind: unknown }).kind));
  }
  return schedule;
}

/** The factor η_t at step t (0-based). */
export function scheduleFactor(schedule: ScheduleDescription, step: number): number {
  const warmup = schedule.warmup ?? 0;
  if (step < warmup) return ((step + 1) / warmup) * afterWarmup(schedule, 0);
  return afterWarmup(schedule, step - warmup);
}

function afterWarmup(schedule: ScheduleDescription, s: number): number {
  switch (schedule.kind) {
    case 'constant':
      return 1;
    case 'step':
      return schedule.factor ** Math.floor(s / schedule.every);
    case 'exponential':
      return schedule.factor ** (s / schedule.every);
    case 'cosine': {
      const span = schedule.total - (schedule.warmup ?? 0);
      const floor = schedule.floor ?? 0;
      return floor + ((1 - floor) * (1 + Math.cos((Math.PI * Math.min(s, span)) / span))) / 2;
    }
  }
}
