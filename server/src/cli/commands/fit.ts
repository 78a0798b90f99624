// `phasewright fit FILE --device gal16v8|gal22v10 [--store NAME] [--outputs a,b] [--pins FILE]
// [--out DIR] [--keep-fill] [--vectors N]`: minimises each control output of a store over its
// address lines, fits the outputs into as many GAL devices as needed, and writes one JEDEC fuse
// map per device, the equations as a part kind in the expression language, and a Verilog
// module. Before anything is written, the equations text is read back and must equal the covers
// at every address, and its values and every fuse map are evaluated at every address the inputs
// can form and each word checked for bus contention and, where no step covers the address, for
// anything not idle (core/logic/verifyFit.ts); an unsafe result is refused. The fuse maps and
// the equations are read back from disk and checked the same way before they are reported.
// Exit 0 when everything fits, 1 when an output cannot fit or the result is unsafe (nothing is
// written) or the table has errors, 2 on usage.
import { basename, extname, resolve } from 'node:path';
import { analyse, errorCount } from '../../core/analysis';
import { encodeMachine } from '../../core/encode/encoder';
import { storeTruthTable } from '../../core/encode/storeTable';
import type { EncodedStore } from '../../core/encode/encoder';
import {
  buildGalImage,
  checkGalImage,
  describeHazards,
  equationsText,
  equationsTextLevels,
  LogicInputError,
  fitDevices,
  fuseMapsLevels,
  minimise,
  verifyFitSafety,
  verilogModule,
  type DeviceName,
  type FittedDevice,
  type FittedLevels,
  type SafetyReport,
  type StoreSafety,
} from '../../core/logic';
import type { Machine } from '../../core/model/types';
import { parseArgs } from '../args';
import { defineCommand } from '../help';
import { readJsonFile, readSource } from '../readSource';
import { progressLine } from '../progress';
import { readInputFile } from '../inputFile';
import { ManifestError } from '../output/manifest';
import { writeOutputSet } from '../output/outputSet';
import { OutputError } from '../output/safeWriter';
import { textTable } from '../textTable';
import { VERSION } from '../version';

const deviceNames: Record<string, DeviceName> = { gal16v8: 'GAL16V8', gal22v10: 'GAL22V10' };

/** The default time bound of minimisation per output, in seconds. */
const DEFAULT_SECONDS_PER_OUTPUT = 10;

export const fitCommand = defineCommand({
  name: 'fit',
  summary: 'minimise a store\'s outputs and write GAL fuse maps (JEDEC), equations and Verilog',
  operands: 'FILE',
  options: [
    { name: 'device', value: 'gal16v8|gal22v10', required: true, help: 'the device to fit' },
    { name: 'store', value: 'NAME', help: 'the store to fit (default main, or the first)' },
    { name: 'outputs', value: 'LIST', help: 'comma-separated signals to fit (default: all of the store)' },
    { name: 'pins', value: 'FILE', help: 'JSON { "signal": pin, ... } fixing pins (outputs, or inputs such as step[0])' },
    { name: 'out', value: 'DIR', help: 'the folder to write into (default out)' },
    { name: 'keep-fill', help: 'keep the whole fill word at addresses no step covers (by default fields and one driver per bus may take any value there)' },
    { name: 'vectors', value: 'N', help: 'at most N test vectors per fuse map (0 for none; default: every care address)' },
    { name: 'mode', value: 'MODE', help: 'the device mode: auto (default), simple or complex for the GAL16V8, combinational for the GAL22V10' },
    { name: 'time-per-output', value: 'SECONDS', help: `how long minimisation may improve one output before it keeps the correct cover it has (default ${DEFAULT_SECONDS_PER_OUTPUT}; 0 for no bound)` },
  ],
  exitCodes: [
    [0, 'everything fits; fuse maps, equations and Verilog written'],
    [1, 'an output cannot fit, the result would be unsafe at some address, the table has errors, no such store, or an output could not be written (nothing written)'],
    [2, 'usage error, or a file that cannot be read'],
  ],
  async run(args, io) {
    const parsed = parseArgs(args, this.options);
    const deviceOption = parsed.options.get('device');
    if (parsed.errors.length || parsed.positionals.length !== 1 || typeof deviceOption !== 'string') {
      io.err(`phasewright fit: ${parsed.errors[0] ?? (parsed.positionals.length !== 1 ? 'give one .pwt file' : 'choose a device with --device gal16v8 or --device gal22v10')}\nusage: phasewright ${this.usage}\n`);
      return 2;
    }
    const device = deviceNames[deviceOption.toLowerCase()];
    if (!device) {
      io.err(`phasewright fit: unknown device '${deviceOption}'; choose gal16v8 or gal22v10\n`);
      return 2;
    }
    const file = parsed.positionals[0];
    const source = readSource(resolve(io.cwd, file));
    if (!source.ok) {
      io.err(`phasewright fit: ${source.reason.replace(resolve(io.cwd, file), file)}\n`);
      return 2;
    }
    let pins: Record<string, number> | undefined;
    const pinsOption = parsed.options.get('pins');
    if (typeof pinsOption === 'string') {
      const loaded = loadPins(resolve(io.cwd, pinsOption));
      if (!loaded.ok) {
        io.err(`phasewright fit: ${loaded.reason}\n`);
        return 2;
      }
      pins = loaded.pins;
    }
    const vectorsOption = parsed.options.get('vectors');
    const maxVectors = typeof vectorsOption === 'string' ? Number(vectorsOption) : undefined;
    if (maxVectors !== undefined && !(Number.isInteger(maxVectors) && maxVectors >= 0)) {
      io.err(`phasewright fit: --vectors takes a whole number (0 for none)\n`);
      return 2;
    }
    const timeOption = parsed.options.get('time-per-output');
    const seconds = typeof timeOption === 'string' ? Number(timeOption) : DEFAULT_SECONDS_PER_OUTPUT;
    if (!(Number.isFinite(seconds) && seconds >= 0)) {
      io.err(`phasewright fit: --time-per-output takes a number of seconds (0 for no bound)\n`);
      return 2;
    }
    const analysis = analyse(source.text);
    const errors = errorCount(analysis.diagnostics);
    if (errors) {
      io.err(`phasewright fit: ${file} has ${errors} error(s); nothing was fitted. Run \`phasewright check ${file}\` first.\n`);
      return 1;
    }
    const machine = analysis.machine;
    const storeOption = parsed.options.get('store');
    const storeName = typeof storeOption === 'string' ? storeOption : machine.stores.find((s) => s.name === 'main')?.name ?? machine.stores[0]?.name;
    const store = machine.stores.find((s) => s.name === storeName);
    if (!store) {
      io.err(`phasewright fit: no store named '${storeName ?? ''}'; the file has ${machine.stores.map((s) => s.name).join(', ') || 'no stores'}\n`);
      return 1;
    }
    const encoded = encodeMachine(machine, { stores: [store.name] });
    const enc = encoded.stores[0];
    if (!enc) {
      io.err(`phasewright fit: store ${store.name} cannot be encoded (it needs a word and an address layout)\n`);
      return 1;
    }
    const outputsOption = parsed.options.get('outputs');
    const wanted = typeof outputsOption === 'string' ? outputsOption.split(',').map((s) => s.trim()).filter(Boolean) : undefined;
    const { table, unreachable, outputBits, safety } = storeTruthTable(machine, encoded, enc, { keepFill: parsed.options.has('keep-fill'), outputs: wanted });
    if (table.outputs.length === 0) {
      io.err(`phasewright fit: no outputs selected${wanted ? ` (--outputs ${wanted.join(',')} matches no signal of store ${store.name})` : ''}\n`);
      return 2;
    }
    // On a terminal, a progress line counts the outputs; Ctrl-C stops the process before
    // anything is written (files are written only after minimisation, all or nothing).
    const progress = progressLine(io, 'minimising');
    const started = Date.now();
    const minimised = minimise(table, {
      polarity: 'best',
      timePerOutputMs: seconds > 0 ? seconds * 1000 : undefined,
      onProgress: (done, total, name) => progress.update(done, total, name),
    });
    progress.finish();
    const minimisedMs = Date.now() - started;
    const fit = fitDevices(minimised, { device, pins, mode: typeof parsed.options.get('mode') === 'string' ? (parsed.options.get('mode') as string) : undefined });
    const title = `${machine.title || stem(file, store.name)}, store ${store.name}`;
    const lines: string[] = [];
    lines.push(`${title}: ${table.outputs.length} outputs of ${table.nInputs} address inputs, ${minimised.outputs.reduce((n, o) => n + o.terms.length, 0)} product terms (minimised in ${minimisedMs} ms)`);
    for (const o of minimised.outputs) if (o.note) lines.push(`note: "${o.name}": ${o.note}`);
    if (!fit.ok) {
      lines.push(`does not fit ${device} devices:`);
      for (const p of fit.problems) {
        lines.push(`  - ${p.message}`);
        for (const o of p.options) lines.push(`      option: ${o}`);
      }
      io.out(lines.join('\n') + '\n');
      io.err('phasewright fit: nothing was written\n');
      return 1;
    }
    const fileStem = stem(file, store.name);
    const images = fit.devices.map((d) => ({ device: d, image: buildGalImage(table, d, fit.devices.length, { designName: `${machine.title || fileStem} ${store.name} ${device} ${d.index + 1}/${fit.devices.length}`, maxVectors, notes: [`phasewright ${VERSION}`] }) }));
    for (const { device: d, image } of images) {
      const check = checkGalImage(table, d, image.jedec);
      if (!check.ok) throw new Error(`fuse map of device ${d.index + 1} failed its own check: ${check.message}`);
    }
    let equations: string;
    try {
      equations = equationsText(minimised, title, `${store.name.replace(/[^A-Za-z0-9_]/g, '_')}_logic`);
    } catch (err) {
      if (!(err instanceof LogicInputError)) throw err;
      io.out(lines.join('\n') + '\n');
      io.err(`phasewright fit: ${err.message}; nothing was written\n`);
      return 1;
    }
    // Safety at every address, of the equations as text (read back, equal to the covers and so
    // to the Verilog) and of the fuse maps as written.
    const textLevels = equationsTextLevels(equations, minimised, outputBits);
    const equationsSafety = textLevels.ok ? verifyFitSafety(machine, enc, safety, textLevels.levels) : textLevels.message;
    const mapsSafety = fuseMapSafety(machine, enc, safety, images.map(({ device: d, image }) => ({ fitted: d, jedec: image.jedec })), outputBits);
    const unsafe = [['the equations', equationsSafety], ['the fuse maps', mapsSafety]] as const;
    for (const [what, report] of unsafe) {
      if (typeof report === 'string' || report.unsafe > 0) {
        lines.push(typeof report === 'string' ? `safety: ${report}` : safetyLine(report));
        io.out(lines.join('\n') + '\n');
        io.err(`phasewright fit: ${what} would be unsafe${typeof report === 'string' ? '' : ` at ${report.unsafe} address(es), first at ${describeAddress(enc, report.first!.address)}: ${describeHazards(report.first!)}`}; nothing was written. Please report this as a bug.\n`);
        return 1;
      }
    }
    const checked = equationsSafety as SafetyReport; // a string or an unsafe report returned above
    const outOption = parsed.options.get('out');
    const outDir = typeof outOption === 'string' ? outOption : 'out';
    try {
      const report = writeOutputSet({
        folder: resolve(io.cwd, outDir),
        command: 'fit',
        sourceFile: basename(file),
        version: VERSION,
        files: [
          ...images.map(({ device: d, image }) => ({ name: `${fileStem}.${device.toLowerCase()}-${d.index + 1}.jed`, format: 'jedec', store: store.name, chip: d.index, bytes: Buffer.from(image.jedec, 'latin1') })),
          { name: `${fileStem}.eqn`, format: 'equations', store: store.name, bytes: Buffer.from(equations, 'utf8') },
          { name: `${fileStem}.v`, format: 'verilog', store: store.name, bytes: Buffer.from(verilogModule(minimised, `${fileStem.replace(/[^A-Za-z0-9_]/g, '_')}_logic`), 'utf8') },
        ],
      });
      // Read every file the checks depend on back from disk and check it once more: each fuse
      // map against the truth table, then the fuse maps together and the equations at every address.
      const readBack = (i: number, what: string): string => {
        const f = report.files[i];
        const read = readInputFile(f.absolutePath, { maxBytes: f.sizeBytes, what, give: 'a file' }, f.displayPath);
        if (!read.ok) throw new OutputError(f.displayPath, `the written ${what} cannot be read back: ${read.reason}`);
        return read.bytes.toString(what === 'equations' ? 'utf8' : 'latin1');
      };
      const mapsRead: { fitted: FittedDevice; jedec: string }[] = [];
      for (const [i, { device: d }] of images.entries()) {
        const jedec = readBack(i, 'fuse maps');
        const check = checkGalImage(table, d, jedec);
        if (!check.ok) throw new OutputError(report.files[i].displayPath, `the written fuse map does not match the table: ${check.message}`);
        mapsRead.push({ fitted: d, jedec });
      }
      const safe = fuseMapSafety(machine, enc, safety, mapsRead, outputBits);
      if (typeof safe === 'string' || safe.unsafe > 0) {
        throw new OutputError(report.files[0].displayPath, `the fuse maps read back are unsafe: ${typeof safe === 'string' ? safe : `${describeAddress(enc, safe.first!.address)}: ${describeHazards(safe.first!)}`}`);
      }
      const eqnIndex = images.length;
      const eqnRead = equationsTextLevels(readBack(eqnIndex, 'equations'), minimised, outputBits);
      const eqnSafe = eqnRead.ok ? verifyFitSafety(machine, enc, safety, eqnRead.levels) : eqnRead.message;
      if (typeof eqnSafe === 'string' || eqnSafe.unsafe > 0) {
        throw new OutputError(report.files[eqnIndex].displayPath, `the equations read back are ${typeof eqnSafe === 'string' ? `wrong: ${eqnSafe}` : `unsafe: ${describeAddress(enc, eqnSafe.first!.address)}: ${describeHazards(eqnSafe.first!)}`}`);
      }
      lines.push(`fitted into ${fit.devices.length} ${device} device${fit.devices.length > 1 ? 's' : ''}, ${fit.devices[0].mode} mode`);
      lines.push('polarity: high, or low where the output cell inverts the sum of products (written ~(...) in the equations)');
      for (const d of fit.devices) lines.push('', ...deviceReport(d, fit.devices.length));
      lines.push('');
      lines.push(safetyLine(checked) + ' (equations, Verilog and every fuse map)');
      lines.push(unreachableText(unreachable, 2 ** table.nInputs, safety, parsed.options.has('keep-fill')));
      lines.push(`files in ${outDir}:`);
      const nameWidth = Math.max(...report.files.map((f) => f.entry.name.length));
      for (const f of report.files) lines.push(`  ${f.entry.name.padEnd(nameWidth)}  ${String(f.sizeBytes).padStart(7)} bytes  sha256 ${f.sha256.slice(0, 16)}`);
      lines.push('Caution: check the fuse maps against the device data sheets and your programmer before burning, use the programmer\'s verify, and test a programmed device with the vectors in the file before it drives a bus.');
      io.out(lines.join('\n') + '\n');
      return 0;
    } catch (err) {
      if (err instanceof OutputError || err instanceof ManifestError) {
        io.err(`phasewright fit: ${err.message}\n`);
        return 1;
      }
      throw err;
    }
  },
});

/** The file names' stem: `halyard-32.main`. */
function stem(file: string, storeName: string): string {
  return `${basename(file, extname(file)) || 'table'}.${storeName}`;
}

/** One device: its outputs as a table (name, pin, terms used of the cell's, polarity), its input pins, spare pins and cautions. */
function deviceReport(d: FittedDevice, count: number): string[] {
  const lines = [`device ${d.index + 1} of ${count} (${d.device})`];
  lines.push(textTable(['output', 'pin', 'terms', 'polarity'], d.outputs.map((o) => [o.name, String(o.pin), `${o.terms.length}/${o.capacity}`, o.inverted ? 'low' : 'high'])));
  lines.push(`  input pins: ${d.inputs.map((i) => `${i.pin} ${i.name}`).join(', ')}`);
  if (d.unusedPins.length) lines.push(`  spare output pins: ${d.unusedPins.join(', ')}`);
  for (const c of d.cautions) lines.push(`  caution: ${c}`);
  return lines;
}

/** What the fitted outputs may do at the addresses no step reaches: which drivers are free. */
function unreachableText(unreachable: number, total: number, safety: StoreSafety, keepFill: boolean): string {
  if (keepFill) return 'free drivers: none; the fill word is kept at every address no step reaches (--keep-fill)';
  const free = [...safety.freeDriver].map(([bus, driver]) => `${driver} on ${bus}`);
  const where = `at the ${unreachable} of ${total} addresses no step reaches`;
  return free.length
    ? `free drivers: ${free.join(', ')} (one per bus ${where}; fields are free there too, every other strobe keeps the fill word)`
    : `free drivers: none (${where} fields are free, every strobe keeps the fill word)`;
}

/** "safety: 8192 of 8192 addresses checked, 0 unsafe". */
function safetyLine(report: SafetyReport): string {
  return `safety: ${report.checked} of ${report.checked} addresses checked, ${report.unsafe} unsafe`;
}

/** An address with its lines by source: `0x0a43 (step=011 taken=0 ...)`. */
function describeAddress(enc: EncodedStore, address: number): string {
  const lines = enc.store.address!.sources.map((s) => `${s.label}=${((address >>> s.lo) & ((1 << (s.hi - s.lo + 1)) - 1)).toString(2).padStart(s.hi - s.lo + 1, '0')}`);
  return `address 0x${address.toString(16).padStart(Math.ceil(enc.addressBits / 4), '0')} (${lines.join(' ')})`;
}

/** The safety of fuse maps evaluated together (their outputs make up the fitted part of the word), or why they cannot be read. */
function fuseMapSafety(machine: Machine, enc: EncodedStore, safety: StoreSafety, maps: { fitted: FittedDevice; jedec: string }[], outputBits: number[]): SafetyReport | string {
  const read = fuseMapsLevels(maps, outputBits, enc.addressBits);
  if (!read.ok) return read.message;
  const levels: FittedLevels[] = read.levels;
  return verifyFitSafety(machine, enc, safety, levels);
}

/** A pins file: JSON `{ "signal": pin, ... }`, signals being outputs (`x.rs1.oe`, `alu.fn[2]`) or inputs (`step[0]`). */
function loadPins(path: string): { ok: true; pins: Record<string, number> } | { ok: false; reason: string } {
  const json = readJsonFile(path);
  if (!json.ok) return json;
  const data = json.data;
  if (!data || typeof data !== 'object' || Array.isArray(data)) return { ok: false, reason: `${path} must hold an object of signal: pin` };
  const pins: Record<string, number> = {};
  for (const [name, pin] of Object.entries(data)) {
    if (!Number.isInteger(pin) || (pin as number) < 1 || (pin as number) > 24) return { ok: false, reason: `${path}: pin of '${name}' must be a whole number from 1 to 24` };
    pins[name] = pin as number;
  }
  return { ok: true, pins };
}
