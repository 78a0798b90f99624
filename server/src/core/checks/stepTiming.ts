// step-timing: the planned step clock (clock_khz on the machine line) must leave every step
// enough time for its longest path: control-store access, enable, bus, ALU, setup before the
// closing edge. A faster clock latches values before they settle. Names the limiting step.
import { budgetOf } from '../budget/budget';
import { type Check } from './context';

export const stepTiming: Check = {
  codes: ['step-timing'],
  run(ctx) {
    const budget = budgetOf(ctx.machine);
    const planned = ctx.machine.figures.get('clock_khz');
    if (!planned || !budget.limiting || budget.maxClockKhz === undefined) return;
    const periodNs = 1e6 / planned.value;
    const tooSlow = budget.paths.filter((p) => p.totalNs > periodNs).sort((a, b) => b.totalNs - a.totalNs);
    if (tooSlow.length === 0) return;
    const worst = tooSlow[0];
    ctx.report(
      'step-timing',
      planned.span,
      `at ${planned.value} kHz a step lasts ${periodNs.toFixed(0)} ns, but step ${worst.step} of ${worst.owner}${worst.guard ? ` (${worst.guard})` : ''} needs ${worst.totalNs.toFixed(0)} ns (${worst.segments.map((s) => `${s.what} ${s.ns}`).join(' + ')}) before ${worst.endpoint}; the fastest safe clock is ${budget.maxClockKhz.toFixed(0)} kHz before margin (an estimate from your figures)`,
      tooSlow.slice(0, 10).map((p) => ({ span: p.span, message: `step ${p.step} of ${p.owner} needs ${p.totalNs.toFixed(0)} ns` })),
    );
  },
};
