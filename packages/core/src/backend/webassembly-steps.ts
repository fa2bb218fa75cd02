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
export function simdStepKernels(x: ModuleExports, memory: LinearMemory, workspace: KernelWorkspace): Pick<KernelTable, StepKernelName> {
  const js = javascriptKernels;
  const { mine, mineOrNull, at, pointer } = addressing(memory);
  return {
    lstmStepForward: (hState, cell, gates, tanhCell, hPrevious, cellPrevious, peephole, rows, hidden, lengths, step) => {
      if (!(mine(hState) && mine(cell) && mine(gates) && mine(tanhCell) && mine(hPrevious) && mine(cellPrevious) && mineOrNull(peephole))) {
        return js.lstmStepForward(hState, cell, gates, tanhCell, hPrevious, cellPrevious, peephole, rows, hidden, lengths, step);
      }
      x.lstmStepForward(
        at(hState),
        at(cell),
        at(gates),
        at(tanhCell),
        at(hPrevious),
        at(cellPrevious),
        pointer(peephole),
        rows,
        hidden,
        workspace.lengths(lengths, rows),
        step,
      );
    },
    lstmStepBackward: (
      gateGradient,
      hiddenPreviousGradient,
      cellPreviousGradient,
      peepholeGradient,
      hiddenGradient,
      cellGradient,
      gates,
      tanhCell,
      cellPrevious,
      cell,
      peephole,
      rows,
      hidden,
      lengths,
      step,
    ) => {
      if (
        !(
          mine(gateGradient) &&
          mineOrNull(hiddenPreviousGradient) &&
          mineOrNull(cellPreviousGradient) &&
          mineOrNull(peepholeGradient) &&
          mineOrNull(hiddenGradient) &&
          mineOrNull(cellGradient) &&
          mine(gates) &&
          mine(tanhCell) &&
          mine(cellPrevious) &&
          mine(cell) &&
          mineOrNull(peephole)
        )
      ) {
        return js.lstmStepBackward(
          gateGradient,
          hiddenPreviousGradient,
          cellPreviousGradient,
          peepholeGradient,
          hiddenGradient,
          cellGradient,
          gates,
          tanhCell,
          cellPrevious,
          cell,
          peephole,
          rows,
          hidden,
          lengths,
          step,
        );
      }
      x.lstmStepBackward(
        at(gateGradient),
        pointer(hiddenPreviousGradient),
        pointer(cellPreviousGradient),
        pointer(peepholeGradient),
        pointer(hiddenGradient),
        pointer(cellGradient),
        at(gates),
        at(tanhCell),
        at(cellPrevious),
        at(cell),
        pointer(peephole),
        rows,
        hidden,
        workspace.lengths(lengths, rows),
        step,
      );
    },
    gruUpdateReset: (gates, projected, projectedOffset, recurrentGates, rows, hidden) => {
      if (!(mine(gates) && mine(projected) && mine(recurrentGates))) return js.gruUpdateReset(gates, projected, projectedOffset, recurrentGates, rows, hidden);
      x.gruUpdateReset(at(gates), at(projected), projectedOffset, at(recurrentGates), rows, hidden);
    },
    gruResetHidden: (resetHidden, gates, hPrevious, rows, hidden) => {
      if (!(mine(resetHidden) && mine(gates) && mine(hPrevious))) return js.gruResetHidden(resetHidden, gates, hPrevious, rows, hidden);
      x.gruResetHidden(at(resetHidden), at(gates), at(hPrevious), rows, hidden);
    },
    gruStepFinish: (hState, gates, projected, projectedOffset, candidate, hPrevious, resetAfter, rows, hidden, lengths, step) => {
      if (!(mine(hState) && mine(gates) && mine(projected) && mine(candidate) && mine(hPrevious))) {
        return js.gruStepFinish(hState, gates, projected, projectedOffset, candidate, hPrevious, resetAfter, rows, hidden, lengths, step);
      }
      x.gruStepFinish(
        at(hState),
        at(gates),
        at(projected),
        projectedOffset,
        at(candidate),
        at(hPrevious),
        +resetAfter,
        rows,
        hidden,
        workspace.lengths(lengths, rows),
        step,
      );
    },
    gruBackwardCandidate: (
      updateResetGradient,
      candidateGradient,
      productGradient,
      hiddenPreviousGradient,
      hiddenGradient,
      gates,
      candidate,
      hPrevious,
      resetAfter,
      rows,
      hidden,
      lengths,
      step,
    ) => {
      if (
        !(
          mine(updateResetGradient) &&
          mine(candidateGradient) &&
          mine(productGradient) &&
          mineOrNull(hiddenPreviousGradient) &&
          mine(hiddenGradient) &&
          mine(gates) &&
          mine(candidate) &&
          mine(hPrevious)
        )
      ) {
        return js.gruBackwardCandidate(
          updateResetGradient,
          candidateGradient,
          productGradient,
          hiddenPreviousGradient,
          hiddenGradient,
          gates,
          candidate,
          hPrevious,
          resetAfter,
          rows,
          hidden,
          lengths,
          step,
        );
      }
      x.gruBackwardCandidate(
        at(updateResetGradient),
        at(candidateGradient),
        at(productGradient),
        pointer(hiddenPreviousGradient),
        at(hiddenGradient),
        at(gates),
        at(candidate),
        at(hPrevious),
        +resetAfter,
        rows,
        hidden,
        workspace.lengths(lengths, rows),
        step,
      );
    },
    gruBackwardReset: (updateResetGradient, hiddenPreviousGradient, resetHiddenGradient, gates, hPrevious, rows, hidden, lengths, step) => {
      if (!(mine(updateResetGradient) && mineOrNull(hiddenPreviousGradient) && mine(resetHiddenGradient) && mine(gates) && mine(hPrevious))) {
        return js.gruBackwardReset(updateResetGradient, hiddenPreviousGradient, resetHiddenGradient, gates, hPrevious, rows, hidden, lengths, step);
      }
      x.gruBackwardReset(
        at(updateResetGradient),
        pointer(hiddenPreviousGradient),
        at(resetHiddenGradient),
        at(gates),
        at(hPrevious),
        rows,
        hidden,
        workspace.lengths(lengths, rows),
        step,
      );
    },
    plainStepForward: (hState, hPrevious, rectified, rows, hidden, lengths, step) => {
      if (!(mine(hState) && mine(hPrevious))) return js.plainStepForward(hState, hPrevious, rectified, rows, hidden, lengths, step);
      x.plainStepForward(at(hState), at(hPrevious), +rectified, rows, hidden, workspace.lengths(lengths, rows), step);
    },
    plainStepBackward: (preGradient, hiddenPreviousGradient, hiddenGradient, hState, rectified, rows, hidden, lengths, step) => {
      if (!(mine(preGradient) && mineOrNull(hiddenPreviousGradient) && mine(hiddenGradient) && mine(hState))) {
        return js.plainStepBackward(preGradient, hiddenPreviousGradient, hiddenGradient, hState, rectified, rows, hidden, lengths, step);
      }
      x.plainStepBackward(
        at(preGradient),
        pointer(hiddenPreviousGradient),
        at(hiddenGradient),
        at(hState),
        +rectified,
        rows,
        hidden,
        workspace.lengths(lengths, rows),
        step,
      );
    },
  };
}
