// return-depth: on a machine whose sequencer has return registers (`holds return`), a call made
// while as many calls are open as there are registers overwrites the step an open call saved:
// that routine's return then goes back to the wrong step (common practice, no source: a
// hardware return stack of fixed depth loses its oldest entry, or here its only one). The paths
// are flow/stepGraph.ts's, which carry the return registers and the open calls along each path.
import { type Check } from './context';
import { returnRegisters, sequencerMove } from '../model/sequencing';
import { instructionGraphs } from '../flow/stepGraph';
import { callAlt, placeOf } from './callReturn';

export const returnDepth: Check = {
  codes: ['return-depth'],
  run(ctx) {
    const machine = ctx.machine;
    const registers = returnRegisters(machine);
    if (!registers.length) return;
    const depth = registers.length;
    for (const cls of machine.classes) {
      const reported = new Set<string>();
      for (const { name, graph } of instructionGraphs(machine, cls, true) ?? []) {
        for (const p of graph.callProblems) {
          if (p.kind !== 'depth' || !p.alt) continue;
          const at = placeOf(p.alt);
          const key = `${at.start}:${p.call}`;
          if (reported.has(key)) continue;
          reported.add(key);
          const open = callAlt(machine, cls, p.call!);
          ctx.report(
            'return-depth',
            at,
            `step ${p.step} of class ${cls.name} calls${p.alt ? ` the routine at step ${sequencerMove(machine, p.alt, p.step)?.to ?? '?'}` : ''} for ${name} while the call at step ${p.call} is still open, and the sequencer \`${machine.sequencer}\` has ${depth === 1 ? 'one return register' : `${depth} return registers`} (\`${registers.join('`, `')}\`): the step saved for the call at step ${p.call} is overwritten, so its routine returns to the wrong step; nest calls at most ${depth} deep, or give the sequencer more return registers`,
            open ? [{ span: open.span, message: `the open call at step ${p.call}${open.phase ? ` (phase ${open.phase.name})` : ''}` }] : undefined,
          );
        }
      }
    }
  },
};
