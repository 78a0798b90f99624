import { readFileSync, writeFileSync } from 'node:fs';
import { store24Table } from './tests/support/hostile';
const demo = readFileSync('examples/halyard-32.pwt','utf8');
writeFileSync('/tmp/s20.pwt', store24Table(demo).replace('address 24', 'address 20').replace('ir[25:15] 13..23', 'ir[22:16] 13..19'));
