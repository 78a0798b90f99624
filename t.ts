import { readFileSync } from 'node:fs';
import { analyse } from './server/src/core/analysis';
for (const f of process.argv.slice(2)) { const a = analyse(readFileSync(f,'utf8')); console.log(f, a.diagnostics.map(d=>d.code+' @'+a.lines.position(d.span.start).line+': '+d.message)); }
