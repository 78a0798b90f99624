// map-overlap: two rows of a decode map that match a common input combination must give the
// same value, or the field's code there is undefined.
import { type Check } from './context';

export const mapOverlap: Check = {
  codes: ['map-overlap'],
  run(ctx) {
    for (const map of ctx.machine.maps.values()) {
      for (let i = 0; i < map.rows.length; i++) {
        for (let j = i + 1; j < map.rows.length; j++) {
          const a = map.rows[i];
          const b = map.rows[j];
          if (a.code === b.code) continue;
          const overlaps = a.patterns.every((p, k) => compatible(p, b.patterns[k] ?? ''));
          if (!overlaps) continue;
          const common = a.patterns.map((p, k) => merge(p, b.patterns[k])).join(' ');
          ctx.report('map-overlap', b.span, `this row (${b.value}) and an earlier one (${a.value}) both match ${common} in map ${map.name}; narrow one of the patterns`, [{ span: a.span, message: `row giving ${a.value}` }]);
        }
      }
    }
  },
};

function compatible(a: string, b: string): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (a[i] !== '-' && b[i] !== '-' && a[i] !== b[i]) return false;
  return true;
}

function merge(a: string, b: string): string {
  let out = '';
  for (let i = 0; i < a.length; i++) out += a[i] === '-' ? b[i] : a[i];
  return out;
}
