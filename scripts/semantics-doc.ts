// Writes docs/semantics.md from the RV32I semantics table (scripts/semantics-page.ts prints it).
// Run: node scripts/run-ts.mjs scripts/semantics-doc.ts
import { writeFileSync } from 'node:fs';
import { semanticsPage } from './semantics-page';

writeFileSync('docs/semantics.md', semanticsPage());
console.log('docs/semantics.md: 40 instructions');
