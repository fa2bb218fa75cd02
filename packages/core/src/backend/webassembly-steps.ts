/**
 * The WebAssembly backend's wrappers of the recurrent cells' step kernels (LSTM, GRU, plain; forward and backward):
 * each calls the SIMD twin with its arrays' byte offsets where every array lives in the backend's memory, else the
 * JavaScript kernel (webassembly-table.ts says why).
 */
import type { KernelTable } from './kernel-table.js';
import { javascriptKernels } from './kernel-table.js';
import type { LinearMemory } from './memory.js';
import type { KernelWorkspace, ModuleExports } from './module.js';
import { addressing } from './module.js';

/** The step kernels' names. */
type StepKernelName =
  | 'lstmStepForward'
  | 'lstmStepBackward'
  | 'gruUpdateReset'
  | 'gruResetHidden'
  | 'gruStepFinish'
  | 'gruBackwardCandidate'
  | 'gruBackwardReset'
  | 'plainStepForward'
  | 'plainStepBackward';

/** The step kernels over `memory`, calling the training module's exports `x` where the arrays are this memory's. */
/** The step kernels over `memory`, calling the training module's exports `x` where the arrays are this memory's. */
export function simdStepKernels(x: ModuleExports, memory: LinearMemory, workspace: KernelWorkspace): Pick<KernelTable, StepKernelName> {
  return {
    ...lstmKernels(x, memory, workspace),
    ...gruKernels(x, memory, workspace),
    ...gruBackwardKernels(x, memory, workspace),
    ...plainKernels(x, memory, workspace),
  };
}

/** The LSTM step's wrappers, forward and backward. */
function lstmKernels(x: ModuleExports, memory: LinearMemory, workspace: KernelWorkspace): Pick<KernelTable, 'lstmStepForward' | 'lstmStepBackward'> {
  const js = javascriptKernels;
  const { mine, mineOrNull, at, pointer } = addressing(memory);
  return {
    lstmStepForward: (out, previous, peephole, place) => {
      if (!(mine(out.h) && mine(out.c) && mine(out.gates) && mine(out.tanhCell) && mine(previous.h) && mine(previous.c) && mineOrNull(peephole))) {
        return js.lstmStepForward(out, previous, peephole, place);
      }
      const { rows, hidden, lengths, step } = place;
      x.lstmStepForward(
        at(out.h),
        at(out.c),
        at(out.gates),
        at(out.tanhCell),
        at(previous.h),
        at(previous.c),
        pointer(peephole),
        rows,
        hidden,
        workspace.lengths(lengths, rows),
        step,
      );
    },
    lstmStepBackward: (out, arriving, saved, place) => {
      const ours =
        mine(out.gates) &&
        mineOrNull(out.hPrevious) &&
        mineOrNull(out.cPrevious) &&
        mineOrNull(out.peephole) &&
        mineOrNull(arriving.h) &&
        mineOrNull(arriving.c) &&
        mine(saved.gates) &&
        mine(saved.tanhCell) &&
        mine(saved.cPrevious) &&
        mine(saved.c) &&
        mineOrNull(saved.peephole);
      if (!ours) return js.lstmStepBackward(out, arriving, saved, place);
      const { rows, hidden, lengths, step } = place;
      x.lstmStepBackward(
        at(out.gates),
        pointer(out.hPrevious),
        pointer(out.cPrevious),
        pointer(out.peephole),
        pointer(arriving.h),
        pointer(arriving.c),
        at(saved.gates),
        at(saved.tanhCell),
        at(saved.cPrevious),
        at(saved.c),
        pointer(saved.peephole),
        rows,
        hidden,
        workspace.lengths(lengths, rows),
        step,
      );
    },
  };
}

/** The GRU step's forward wrappers: z and r, r ⊙ h₋, and the finish. */
function gruKernels(
  x: ModuleExports,
  memory: LinearMemory,
  workspace: KernelWorkspace,
): Pick<KernelTable, 'gruUpdateReset' | 'gruResetHidden' | 'gruStepFinish'> {
  const js = javascriptKernels;
  const { mine, at } = addressing(memory);
  return {
    gruUpdateReset: (gates, projected, projectedOffset, recurrentGates, rows, hidden) => {
      if (!(mine(gates) && mine(projected) && mine(recurrentGates))) return js.gruUpdateReset(gates, projected, projectedOffset, recurrentGates, rows, hidden);
      x.gruUpdateReset(at(gates), at(projected), projectedOffset, at(recurrentGates), rows, hidden);
    },
    gruResetHidden: (resetHidden, gates, hPrevious, rows, hidden) => {
      if (!(mine(resetHidden) && mine(gates) && mine(hPrevious))) return js.gruResetHidden(resetHidden, gates, hPrevious, rows, hidden);
      x.gruResetHidden(at(resetHidden), at(gates), at(hPrevious), rows, hidden);
    },
    gruStepFinish: (out, inputs, form, place) => {
      if (!(mine(out.h) && mine(out.gates) && mine(inputs.projected) && mine(inputs.candidate) && mine(inputs.hPrevious))) {
        return js.gruStepFinish(out, inputs, form, place);
      }
      const { rows, hidden, lengths, step } = place;
      x.gruStepFinish(
        at(out.h),
        at(out.gates),
        at(inputs.projected),
        inputs.projectedOffset,
        at(inputs.candidate),
        at(inputs.hPrevious),
        +(form === 'resetAfter'),
        rows,
        hidden,
        workspace.lengths(lengths, rows),
        step,
      );
    },
  };
}

/** The GRU step's backward wrappers: both halves. */
function gruBackwardKernels(
  x: ModuleExports,
  memory: LinearMemory,
  workspace: KernelWorkspace,
): Pick<KernelTable, 'gruBackwardCandidate' | 'gruBackwardReset'> {
  const js = javascriptKernels;
  const { mine, mineOrNull, at, pointer } = addressing(memory);
  return {
    gruBackwardCandidate: (out, arriving, saved, form, place) => {
      const ours =
        mine(out.updateReset) &&
        mine(out.candidate) &&
        mine(out.product) &&
        mineOrNull(out.hPrevious) &&
        mine(arriving) &&
        mine(saved.gates) &&
        mine(saved.candidate) &&
        mine(saved.hPrevious);
      if (!ours) return js.gruBackwardCandidate(out, arriving, saved, form, place);
      const { rows, hidden, lengths, step } = place;
      x.gruBackwardCandidate(
        at(out.updateReset),
        at(out.candidate),
        at(out.product),
        pointer(out.hPrevious),
        at(arriving),
        at(saved.gates),
        at(saved.candidate),
        at(saved.hPrevious),
        +(form === 'resetAfter'),
        rows,
        hidden,
        workspace.lengths(lengths, rows),
        step,
      );
    },
    gruBackwardReset: (out, resetHiddenGradient, saved, place) => {
      if (!(mine(out.updateReset) && mineOrNull(out.hPrevious) && mine(resetHiddenGradient) && mine(saved.gates) && mine(saved.hPrevious))) {
        return js.gruBackwardReset(out, resetHiddenGradient, saved, place);
      }
      const { rows, hidden, lengths, step } = place;
      x.gruBackwardReset(
        at(out.updateReset),
        pointer(out.hPrevious),
        at(resetHiddenGradient),
        at(saved.gates),
        at(saved.hPrevious),
        rows,
        hidden,
        workspace.lengths(lengths, rows),
        step,
      );
    },
  };
}

/** The plain step's wrappers, forward and backward. */
function plainKernels(x: ModuleExports, memory: LinearMemory, workspace: KernelWorkspace): Pick<KernelTable, 'plainStepForward' | 'plainStepBackward'> {
  const js = javascriptKernels;
  const { mine, mineOrNull, at, pointer } = addressing(memory);
  return {
    plainStepForward: (h, hPrevious, activation, place) => {
      if (!(mine(h) && mine(hPrevious))) return js.plainStepForward(h, hPrevious, activation, place);
      const { rows, hidden, lengths, step } = place;
      x.plainStepForward(at(h), at(hPrevious), +(activation === 'relu'), rows, hidden, workspace.lengths(lengths, rows), step);
    },
    plainStepBackward: (out, arriving, h, activation, place) => {
      if (!(mine(out.pre) && mineOrNull(out.hPrevious) && mine(arriving) && mine(h))) return js.plainStepBackward(out, arriving, h, activation, place);
      const { rows, hidden, lengths, step } = place;
      x.plainStepBackward(
        at(out.pre),
        pointer(out.hPrevious),
        at(arriving),
        at(h),
        +(activation === 'relu'),
        rows,
        hidden,
        workspace.lengths(lengths, rows),
        step,
      );
    },
  };
}
