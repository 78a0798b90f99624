// The server side of the editor's Phasewright commands, answered through
// `workspace/executeCommand`: `phasewright.build` (write the control-store images of an open
// file), `phasewright.listing` (the control-word listing as text), `phasewright.diagram` (the
// timing diagram of a class as SVG, with the guard inputs the editor offers as choices) and
// `phasewright.summary` (title, problem counts and store sizes for the status bar). Arguments
// come from outside and are checked; failures the user can act on come back as
// `{ ok: false, reason }`, never as exceptions. It does not decide what the editor shows.
import { basename } from 'node:path';
import type { Analysis } from '../core/analysis';
import { readSeverityTable } from '../core/checks/severitySettings';
import { parseGuardChoice } from '../core/diagram/guardChoice';
import { type DiagramTheme, diagramThemes } from '../core/diagram/palette';
import { timingDiagram } from '../core/diagram/timing';
import { classAtOffset, findClass } from '../core/diagram/timingModel';
import { loopCountProblem } from '../core/diagram/sequencedPath';
import { buildFormats, planBuild, type BuildFormat } from '../core/encode/plan';
import { buildImages, describeBuild } from '../cli/buildImages';
import { pathFromFileUri } from '../cli/fsPath';
import { outsideWorkspace } from './workspaceFolders';
import { OutputError } from '../cli/output/safeWriter';
import { ManifestError } from '../cli/output/manifest';
import { type CommandContext, type CommandHandler, registerCommand } from './commands';

export const editorCommandIds = {
  build: 'phasewright.build',
  listing: 'phasewright.listing',
  diagram: 'phasewright.diagram',
  summary: 'phasewright.summary',
} as const;

export type Refusal = { ok: false; reason: string };

export interface BuildAnswer {
  ok: true;
  /** The summary people read: stores, chips, files, checksums, cautions. */
  summary: string;
  folder: string;
  files: string[];
  forced: boolean;
}

export interface ListingAnswer {
  ok: true;
  listings: { store: string; name: string; text: string }[];
  errors: number;
}

export interface DiagramAnswer {
  ok: true;
  svg: string;
  className: string;
  /** True when the class is the one under the cursor. */
  atCursor: boolean;
  classes: string[];
  inputs: { name: string; width: number; bits: string; given: boolean; onAddress: boolean }[];
  instruction?: string;
  steps: number;
  /** On a machine with a sequencer part: the loop count the loops were drawn with. */
  loopCount?: number;
  errors: number;
}

export interface SummaryAnswer {
  ok: true;
  title?: string;
  errors: number;
  warnings: number;
  infos: number;
  stores: { name: string; addressBits: number; wordBits: number; chips: number; text: string }[];
}

type Args = Record<string, unknown>;

function firstArgument(args: unknown[]): Args | Refusal {
  const first = args[0];
  if (typeof first !== 'object' || first === null || Array.isArray(first)) return { ok: false, reason: 'the command needs one argument object with a "uri"' };
  if (typeof (first as Args).uri !== 'string') return { ok: false, reason: 'the command argument has no "uri" string' };
  return first as Args;
}

function isRefusal(value: unknown): value is Refusal {
  return typeof value === 'object' && value !== null && (value as Refusal).ok === false;
}

function analysisFor(args: Args, context: Pick<CommandContext, 'analysisOf'>): Analysis | Refusal {
  const analysis = context.analysisOf(args.uri as string);
  return analysis ?? { ok: false, reason: 'the file is not open in the editor, or it is larger than phasewright.maxFileSizeKB' };
}

function fileNameOf(uri: string): string {
  try {
    return basename(pathFromFileUri(uri) ?? decodeURIComponent(new URL(uri).pathname)) || 'table.pwt';
  } catch {
    return 'table.pwt';
  }
}

function errorsOf(analysis: Analysis): number {
  return analysis.diagnostics.filter((d) => d.severity === 'error').length;
}

/**
 * `phasewright.build {uri, outputFolder, formats?, force?, severity?}`: writes the images like
 * `phasewright build`, into a folder inside the workspace (workspaceFolders.ts).
 */
export function runBuild(args: unknown[], context: Pick<CommandContext, 'analysisOf' | 'workspaceFolders'>): BuildAnswer | Refusal {
  const a = firstArgument(args);
  if (isRefusal(a)) return a;
  const analysis = analysisFor(a, context);
  if (isRefusal(analysis)) return analysis;
  const folder = a.outputFolder;
  if (typeof folder !== 'string' || (!folder.startsWith('/') && !/^[A-Za-z]:[\\/]/.test(folder))) return { ok: false, reason: 'the output folder must be an absolute path' };
  const outside = outsideWorkspace(folder, context.workspaceFolders?.() ?? [], pathFromFileUri(a.uri as string));
  if (outside) return { ok: false, reason: outside };
  let formats: BuildFormat[] | undefined;
  if (a.formats !== undefined) {
    if (!Array.isArray(a.formats) || a.formats.some((f) => !buildFormats.includes(f as BuildFormat)) || a.formats.length === 0) {
      return { ok: false, reason: `phasewright.formats must list some of ${buildFormats.join(', ')}` };
    }
    formats = a.formats as BuildFormat[];
  }
  const source = fileNameOf(a.uri as string);
  try {
    const result = buildImages({
      text: analysis.text,
      sourcePath: source,
      outDir: folder,
      formats,
      force: a.force === true,
      severities: readSeverityTable(a.severity).severities,
    });
    if (!result.ok) return { ok: false, reason: result.reason.replace(/ or pass --force[^.]*\./, '.') };
    return { ok: true, summary: describeBuild(result, folder), folder, files: result.report.files.map((f) => f.entry.name), forced: result.forced };
  } catch (err) {
    if (err instanceof OutputError || err instanceof ManifestError) return { ok: false, reason: err.message };
    throw err;
  }
}

/** `phasewright.listing {uri, store?}`: the listing of every store (or one), as the build writes it. */
export function runListing(args: unknown[], context: Pick<CommandContext, 'analysisOf'>): ListingAnswer | Refusal {
  const a = firstArgument(args);
  if (isRefusal(a)) return a;
  const analysis = analysisFor(a, context);
  if (isRefusal(analysis)) return analysis;
  const source = fileNameOf(a.uri as string);
  const stores = typeof a.store === 'string' ? [a.store] : undefined;
  if (stores && !analysis.machine.stores.some((s) => s.name === stores[0])) return { ok: false, reason: `no store named '${stores[0]}'` };
  const plan = planBuild(analysis.machine, { stem: source.replace(/\.pwt$/i, ''), source, formats: ['list'], stores });
  if (plan.problems.length) return { ok: false, reason: `cannot lay out the control store: ${plan.problems.join('; ')}` };
  const listings = plan.files.flatMap((f) => (f.kind === 'text' ? [{ store: f.store, name: f.name, text: boundedText(f.chunks(), f.name) }] : []));
  if (listings.length === 0) return { ok: false, reason: 'the file declares no store to list (a `word` and an `address` layout)' };
  return { ok: true, listings, errors: errorsOf(analysis) };
}

/** Most characters of listing text one answer carries per store (a 24-line store lists gigabytes). */
export const maxListingChars = 8 * 1024 * 1024;

/** The first `maxListingChars` of a listing, whole lines, and a last line saying where the rest is. */
function boundedText(chunks: Iterable<string>, name: string): string {
  let text = '';
  for (const chunk of chunks) {
    if (text.length + chunk.length <= maxListingChars) {
      text += chunk;
      continue;
    }
    const room = chunk.slice(0, maxListingChars - text.length);
    text += room.slice(0, room.lastIndexOf('\n') + 1);
    // Stopping the generator here ends the walk: the rest is never made.
    return `${text}# ... the listing goes on; the editor shows its first ${maxListingChars / 1024 / 1024} MB. Build the images (with the listing format) for all of ${name}.\n`;
  }
  return text;
}

/**
 * `phasewright.diagram {uri, offset?, className?, guard? | guards?, loopCount?, all?, theme?}`: the
 * SVG of one class. `guards` maps class names to choice texts, so the caller need not know which
 * class the cursor stands in. `loopCount` (0 to 64, default 2) is how many times each loop goes
 * round on a machine with a sequencer part.
 */
export function runDiagram(args: unknown[], context: Pick<CommandContext, 'analysisOf'>): DiagramAnswer | Refusal {
  const a = firstArgument(args);
  if (isRefusal(a)) return a;
  const analysis = analysisFor(a, context);
  if (isRefusal(analysis)) return analysis;
  const machine = analysis.machine;
  if (machine.classes.length === 0) return { ok: false, reason: 'the file declares no class to draw' };
  // The class under the cursor wins; elsewhere the class named, else the first one.
  let cls = typeof a.offset === 'number' ? classAtOffset(machine, a.offset) : undefined;
  if (!cls && typeof a.className === 'string') {
    cls = findClass(machine, a.className);
    if (!cls && typeof a.offset !== 'number') return { ok: false, reason: `no class named '${a.className}'` };
  }
  cls ??= machine.classes[0];
  const guards = typeof a.guards === 'object' && a.guards !== null ? (a.guards as Record<string, unknown>) : {};
  const guardText = typeof a.guard === 'string' ? a.guard : typeof guards[cls.name] === 'string' ? (guards[cls.name] as string) : '';
  const choice = parseGuardChoice(machine, guardText);
  if (!choice.ok) return { ok: false, reason: choice.reason };
  const theme = typeof a.theme === 'string' && diagramThemes.includes(a.theme as DiagramTheme) ? (a.theme as DiagramTheme) : 'host';
  const loopProblem = a.loopCount === undefined ? undefined : loopCountProblem(a.loopCount);
  if (loopProblem) return { ok: false, reason: loopProblem };
  const diagram = timingDiagram(machine, cls, choice.choice, { all: a.all === true, theme, loopCount: a.loopCount as number | undefined });
  const m = diagram.model;
  return {
    ok: true,
    svg: diagram.svg,
    className: cls.name,
    atCursor: typeof a.offset === 'number' && classAtOffset(machine, a.offset) === cls,
    classes: machine.classes.map((c) => c.name),
    inputs: m.inputs.map((i) => ({ name: i.name, width: i.width, bits: i.bits, given: i.given, onAddress: i.onAddress })),
    instruction: m.instruction,
    steps: m.columns.length,
    ...(m.sequence ? { loopCount: m.sequence.loopCount } : {}),
    errors: errorsOf(analysis),
  };
}

/** Word counts people say: 8192 -> 8K, 256 -> 256. */
function depthText(words: number): string {
  if (words >= 1024 * 1024 && words % (1024 * 1024) === 0) return `${words / (1024 * 1024)}M`;
  if (words >= 1024 && words % 1024 === 0) return `${words / 1024}K`;
  return String(words);
}

/** `phasewright.summary {uri}`: what the status bar shows. */
export function runSummary(args: unknown[], context: Pick<CommandContext, 'analysisOf'>): SummaryAnswer | Refusal {
  const a = firstArgument(args);
  if (isRefusal(a)) return a;
  const analysis = analysisFor(a, context);
  if (isRefusal(analysis)) return analysis;
  const count = (s: string) => analysis.diagnostics.filter((d) => d.severity === s).length;
  const stores = analysis.machine.stores
    .filter((s) => s.word && s.address)
    .map((s) => ({
      name: s.name,
      addressBits: s.address!.width,
      wordBits: s.word!.width,
      chips: s.word!.chipWidths.length,
      text: `${depthText(2 ** s.address!.width)}×${s.word!.width}`,
    }));
  return { ok: true, title: analysis.machine.title, errors: count('error'), warnings: count('warning'), infos: count('info'), stores };
}

/** The handlers by command id, for the executeCommand registry. */
export const editorCommandHandlers: Record<string, CommandHandler> = {
  [editorCommandIds.build]: runBuild,
  [editorCommandIds.listing]: runListing,
  [editorCommandIds.diagram]: runDiagram,
  [editorCommandIds.summary]: runSummary,
};

/** Registers the editor commands; call once, before the server answers `initialize`. */
export function registerEditorCommands(register: (id: string, handler: CommandHandler) => void = registerCommand): void {
  for (const [id, handler] of Object.entries(editorCommandHandlers)) register(id, handler);
}
