/** Messages between the page and its training worker. */
import type { HeldOut, TrainingConfig } from './training.js';

export type ToWorker = { readonly type: 'train'; readonly config: TrainingConfig } | { readonly type: 'stop' } | { readonly type: 'check' };

export interface ChartPoint {
  readonly step: number;
  readonly value: number;
}

export type FromWorker =
  | {
      readonly type: 'progress';
      readonly training: ChartPoint[];
      readonly validation: ChartPoint[];
      readonly gradientNorm: ChartPoint[];
      readonly step: number;
      readonly totalSteps: number;
    }
  | { readonly type: 'started'; readonly workers: number }
  | {
      readonly type: 'done';
      readonly steps: number;
      readonly lastLoss: number;
      readonly lastLossBits: string;
      readonly weightFile: string;
      readonly backend: string;
      readonly workers: number;
      readonly heldOut: HeldOut;
    }
  | { readonly type: 'checked'; readonly reports: { readonly label: string; readonly passed: boolean; readonly worst: number }[] }
  | { readonly type: 'failed'; readonly message: string };
