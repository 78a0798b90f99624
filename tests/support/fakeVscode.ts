// A stand-in for the `vscode` module, just large enough to run the client's command modules
// in a test (vitest aliases `vscode` to this file): files are real files on disk, dialogs
// answer from a queue the test fills, and every message and progress call is recorded.
// Deliberately not here: any editor behaviour the commands do not use.
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { dirname, join, relative } from 'node:path';

export class Uri {
  private constructor(
    readonly scheme: string,
    readonly path: string,
    readonly query = '',
  ) {}
  static file(path: string): Uri {
    return new Uri('file', path);
  }
  static joinPath(base: Uri, ...parts: string[]): Uri {
    return new Uri(base.scheme, join(base.path, ...parts), base.query);
  }
  static parse(text: string): Uri {
    return text.startsWith('file://') ? Uri.file(decodeURIComponent(text.slice(7))) : new Uri('other', text);
  }
  static from(parts: { scheme: string; path: string; query?: string }): Uri {
    return new Uri(parts.scheme, parts.path, parts.query);
  }
  get fsPath(): string {
    return this.path;
  }
  toString(): string {
    return `${this.scheme}://${this.path}${this.query ? `?${this.query}` : ''}`;
  }
}

export enum ProgressLocation {
  SourceControl = 1,
  Window = 10,
  Notification = 15,
}

export enum ViewColumn {
  Active = -1,
  Beside = -2,
  One = 1,
}

type CreateFile = { uri: Uri; overwrite?: boolean; ignoreIfExists?: boolean; contents?: Uint8Array };

export class EventEmitter<T> {
  private readonly listeners: ((value: T) => void)[] = [];
  readonly event = (listener: (value: T) => void) => {
    this.listeners.push(listener);
    return { dispose: () => undefined };
  };
  fire(value: T): void {
    for (const listener of this.listeners) listener(value);
  }
  dispose(): void {
    this.listeners.length = 0;
  }
}

export class WorkspaceEdit {
  readonly creates: CreateFile[] = [];
  createFile(uri: Uri, options: Omit<CreateFile, 'uri'> = {}): void {
    this.creates.push({ uri, ...options });
  }
}

/** What the commands did, for the test to read, and the answers dialogs give. */
export const recorded = {
  messages: [] as { kind: 'info' | 'warning' | 'error'; text: string }[],
  progress: [] as { location: unknown; title?: string }[],
  opened: [] as string[],
  inputAnswers: [] as (string | undefined)[],
  /** The label of the item each quick pick chooses (undefined: cancelled). */
  pickAnswers: [] as (string | undefined)[],
  folders: [] as { name: string; uri: Uri; index: number }[],
  trusted: true,
  settings: {} as Record<string, unknown>,
  reset(): void {
    this.messages.length = 0;
    this.progress.length = 0;
    this.opened.length = 0;
    this.inputAnswers.length = 0;
    this.pickAnswers.length = 0;
    this.folders.length = 0;
    this.trusted = true;
    this.settings = {};
  },
};

const message = (kind: 'info' | 'warning' | 'error') => async (text: string) => {
  recorded.messages.push({ kind, text });
  return undefined;
};

export const window = {
  showInformationMessage: message('info'),
  showWarningMessage: message('warning'),
  showErrorMessage: message('error'),
  async showInputBox(options: { validateInput?: (value: string) => string | undefined }) {
    const answer = recorded.inputAnswers.shift();
    if (answer !== undefined && options.validateInput?.(answer)) return undefined;
    return answer;
  },
  async showQuickPick<T extends { label: string }>(items: readonly T[]) {
    const label = recorded.pickAnswers.shift();
    return items.find((item) => item.label === label);
  },
  async showWorkspaceFolderPick() {
    return recorded.folders[0];
  },
  async withProgress<T>(options: { location: unknown; title?: string }, work: () => Thenable<T>): Promise<T> {
    recorded.progress.push({ location: options.location, title: options.title });
    return work();
  },
  async showTextDocument(document: { uri: Uri }) {
    recorded.opened.push(document.uri.toString());
    return {};
  },
};

export const workspace = {
  textDocuments: [] as unknown[],
  onDidChangeTextDocument() {
    return { dispose: () => undefined };
  },
  get workspaceFolders() {
    return recorded.folders.length ? recorded.folders : undefined;
  },
  get isTrusted() {
    return recorded.trusted;
  },
  getWorkspaceFolder(uri: Uri) {
    return recorded.folders.find((f) => uri.path.startsWith(f.uri.path + '/'));
  },
  getConfiguration() {
    return { get: (key: string) => recorded.settings[key] };
  },
  asRelativePath(target: Uri | string) {
    const path = typeof target === 'string' ? target : target.path;
    const folder = recorded.folders.find((f) => path.startsWith(f.uri.path));
    return folder ? relative(folder.uri.path, path) : path;
  },
  async openTextDocument(uri: Uri) {
    return { uri, languageId: uri.path.endsWith('.pwt') ? 'phasewright' : 'plaintext' };
  },
  async applyEdit(edit: WorkspaceEdit) {
    for (const create of edit.creates) if (existsSync(create.uri.fsPath) && !create.overwrite && !create.ignoreIfExists) return false;
    for (const create of edit.creates) {
      mkdirSync(dirname(create.uri.fsPath), { recursive: true });
      if (!existsSync(create.uri.fsPath) || create.overwrite) writeFileSync(create.uri.fsPath, create.contents ?? new Uint8Array());
    }
    return true;
  },
  fs: {
    async readFile(uri: Uri) {
      return new Uint8Array(readFileSync(uri.fsPath));
    },
    async writeFile(uri: Uri, bytes: Uint8Array) {
      writeFileSync(uri.fsPath, bytes);
    },
  },
};

export const commands = {
  async executeCommand() {
    return undefined;
  },
};
