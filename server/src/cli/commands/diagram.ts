// `phasewright diagram FILE --class NAME [--guard taken=1,funct3=101] [--loop-count N] [--all] [--theme T] -o FILE.svg`
// (options: the list below, which the help prints too):
// draws the timing diagram of one class as a standalone SVG file, written atomically and read
// back. On a machine with a sequencer part the columns follow the sequencer and each loop is
// drawn going round N times (--loop-count) before its way out. Exit 0 on success (a note on stderr when the table has errors: the picture then shows
// a table that would not build), 2 on usage, input or output errors.
import { basename, dirname, resolve } from 'node:path';
import { parseArgs } from '../args';
import { defineCommand } from '../help';
import { readSource } from '../readSource';
import { OutputError, writeFileSafely } from '../output/safeWriter';
import { analyse, errorCount } from '../../core/analysis';
import { parseGuardChoice } from '../../core/diagram/guardChoice';
import { type DiagramTheme, diagramThemes } from '../../core/diagram/palette';
import { timingDiagram } from '../../core/diagram/timing';
import { findClass } from '../../core/diagram/timingModel';
import { defaultLoopCount, loopCountProblem, maxLoopCount } from '../../core/diagram/sequencedPath';
import { stepsText } from '../../core/flow/stepGraph';

function plural(count: number, one: string, many = `${one}s`): string {
  return `${count} ${count === 1 ? one : many}`;
}

/** The step count of the summary; on a sequencer machine with the loop count and what the loops did: `7 steps (loop count 3: step 3 repeats 3 times; shz from the loop, not --guard)`. */
function stepsSummary(m: ReturnType<typeof timingDiagram>['model']): string {
  const sequence = m.sequence;
  const steps = `${plural(m.columns.length, 'step')}${sequence?.cut ? ' drawn, cut' : ''}`;
  if (!sequence?.loops.length) return steps;
  const count = `loop count ${sequence.loopCount}${sequence.loopCountGiven ? '' : ', the default'}`;
  const flags = [...new Set(sequence.loops.flatMap((l) => l.flags.map((f) => f.name)))];
  const loops = sequence.loops.map((l) => `${stepsText(l.steps)} ${l.steps.length > 1 ? 'repeat' : 'repeats'} ${l.forEver ? 'for ever' : plural(l.repeats, 'time')}`).join(', ');
  return `${steps} (${count}: ${loops}${flags.length ? `; ${flags.join(', ')} from the loop, not --guard` : ''})`;
}

export const diagramCommand = defineCommand({
  name: 'diagram',
  summary: 'timing diagram of one class as a standalone SVG file',
  operands: 'FILE',
  options: [
    { name: 'class', value: 'NAME', required: true, help: 'the class to draw' },
    { name: 'guard', value: 'IN=BITS,...', help: 'the guard inputs to draw it with, e.g. taken=1,funct3=101 (default: all 0)' },
    {
      name: 'loop-count',
      value: 'N',
      help: `on a machine with a sequencer part: draw each loop going round N times, then its way out (0 to ${maxLoopCount}; default ${defaultLoopCount}); the loop's exit flags follow it, not --guard`,
    },
    { name: 'all', help: 'draw every strobe, field and bus, not only those the class uses' },
    { name: 'theme', value: 'light|dark|auto', help: 'colours; auto (default) follows the viewer\'s light or dark preference' },
    { name: 'out', short: 'o', value: 'FILE.svg', required: true, help: 'the SVG file to write' },
  ],
  exitCodes: [
    [0, 'written (a note on stderr when the table has errors: the picture shows the table as written)'],
    [2, 'usage error, a file that cannot be read, no class of that name, a bad --guard or --loop-count, or the SVG could not be written'],
  ],
  async run(args, io) {
    const parsed = parseArgs(args, this.options);
    const fail = (reason: string) => {
      io.err(`phasewright diagram: ${reason}\nusage: phasewright ${this.usage}\n`);
      return 2;
    };
    if (parsed.errors.length) return fail(parsed.errors[0]);
    if (parsed.positionals.length !== 1) return fail('give one .pwt file');
    const className = parsed.options.get('class');
    if (typeof className !== 'string' || !className) return fail('name the class to draw with --class NAME');
    const out = parsed.options.get('out');
    if (typeof out !== 'string' || !out) return fail('name the SVG file to write with -o FILE.svg');
    const themeOption = parsed.options.get('theme');
    const theme = (typeof themeOption === 'string' ? themeOption : 'auto') as DiagramTheme;
    if (!diagramThemes.includes(theme) || theme === 'host') return fail(`unknown theme '${theme}'; choose light, dark or auto`);
    const loopOption = parsed.options.get('loop-count');
    const loopCount = typeof loopOption === 'string' && /^\d+$/.test(loopOption) ? Number(loopOption) : loopOption === undefined ? undefined : NaN;
    if (loopCount !== undefined && loopCountProblem(loopCount)) return fail(`--loop-count: ${loopCountProblem(loopCount)}`);

    const file = parsed.positionals[0];
    const source = readSource(resolve(io.cwd, file));
    if (!source.ok) {
      io.err(`phasewright diagram: ${source.reason.replace(resolve(io.cwd, file), file)}\n`);
      return 2;
    }
    const analysis = analyse(source.text);
    const cls = findClass(analysis.machine, className);
    if (!cls) {
      const names = analysis.machine.classes.map((c) => c.name);
      io.err(`phasewright diagram: ${file} has no class named '${className}'; ${names.length ? `its classes are ${names.join(', ')}` : 'it declares no class'}\n`);
      return 2;
    }
    const guardOption = parsed.options.get('guard');
    const choice = parseGuardChoice(analysis.machine, typeof guardOption === 'string' ? guardOption : '');
    if (!choice.ok) {
      io.err(`phasewright diagram: --guard: ${choice.reason}\n`);
      return 2;
    }
    const diagram = timingDiagram(analysis.machine, cls, choice.choice, { all: parsed.options.has('all'), theme, loopCount });
    const target = resolve(io.cwd, out);
    try {
      const report = writeFileSafely(dirname(target), { name: basename(target), bytes: Buffer.from(diagram.svg, 'utf8') });
      const errors = errorCount(analysis.diagnostics);
      if (errors > 0) io.err(`phasewright diagram: note: ${file} has ${errors} error(s); the diagram shows the table as written (run 'phasewright check ${file}').\n`);
      const m = diagram.model;
      io.out(
        `wrote ${out} (${report.sizeBytes} bytes): class ${m.className}, ${stepsSummary(m)}, ${plural(m.strobes.length, 'strobe')}, ${plural(m.fields.length, 'field')}, ${plural(m.buses.length, 'bus', 'buses')}` +
          `${m.inputs.length ? `; ${m.inputs.map((i) => `${i.name}=${i.bits}`).join(' ')}` : ''}${m.instruction ? ` (${m.instruction})` : ''}\n`,
      );
      for (const note of m.notes) io.out(`note: ${note}\n`);
      if (loopCount !== undefined && !m.sequence) io.out(`note: --loop-count has no effect: ${file} has no sequencer part, so its steps count up in number order.\n`);
      return 0;
    } catch (err) {
      if (err instanceof OutputError) {
        io.err(`phasewright diagram: ${err.message}\n`);
        return 2;
      }
      throw err;
    }
  },
});
