// Typed calls of the language server's editor commands (`phasewright.build`, `.listing`,
// `.diagram`, `.summary`; see server/src/lsp/editorCommands.ts) over `workspace/executeCommand`.
// The answers are plain data; a refusal comes back as `{ ok: false, reason }`. It does not show
// anything to the user.
import { ExecuteCommandRequest, type LanguageClient } from 'vscode-languageclient/node';

// The answer shapes are the server's own (type-only imports: nothing of the server is bundled
// into the client).
import type { BuildAnswer, DiagramAnswer, ListingAnswer, Refusal, SummaryAnswer } from '../../server/src/lsp/editorCommands';
import type { RunAnswer } from '../../server/src/lsp/runCommand';

export type { BuildAnswer, DiagramAnswer, ListingAnswer, Refusal, RunAnswer, SummaryAnswer };
export type DiagramInput = DiagramAnswer['inputs'][number];

export interface DiagramRequest {
  uri: string;
  className?: string;
  offset?: number;
  guard?: string;
  /** Choice texts by class name; the server uses the one of the class it draws. */
  guards?: Record<string, string>;
  all?: boolean;
  /** On a machine with a sequencer part: how many times each loop goes round (0 to 64; default 2). */
  loopCount?: number;
  theme?: 'light' | 'dark' | 'auto' | 'host';
}

/** The server answered something that is neither an answer nor a refusal (a crashed handler answers null). */
function unexpected(command: string): Refusal {
  return { ok: false, reason: `the language server gave no answer to ${command}; see the "Phasewright Language Server" output` };
}

export class ServerCommands {
  constructor(private readonly client: LanguageClient) {}

  private async call<T>(command: string, argument: object): Promise<T | Refusal> {
    try {
      const answer = (await this.client.sendRequest(ExecuteCommandRequest.type, { command, arguments: [argument] })) as T | Refusal | null;
      if (!answer || typeof answer !== 'object' || typeof (answer as { ok?: unknown }).ok !== 'boolean') return unexpected(command);
      return answer;
    } catch (err) {
      return { ok: false, reason: (err as Error)?.message ?? String(err) };
    }
  }

  build(argument: { uri: string; outputFolder: string; formats?: string[]; severity?: unknown }): Promise<BuildAnswer | Refusal> {
    return this.call('phasewright.build', argument);
  }

  listing(argument: { uri: string; store?: string }): Promise<ListingAnswer | Refusal> {
    return this.call('phasewright.listing', argument);
  }

  diagram(argument: DiagramRequest): Promise<DiagramAnswer | Refusal> {
    return this.call('phasewright.diagram', argument);
  }

  summary(argument: { uri: string }): Promise<SummaryAnswer | Refusal> {
    return this.call('phasewright.summary', argument);
  }

  run(argument: { uri: string; program: string; loadAddress?: number }): Promise<RunAnswer | Refusal> {
    return this.call('phasewright.run', argument);
  }
}
