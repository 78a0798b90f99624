// The outside world as the CLI commands see it: output streams, the working directory and the
// environment. Tests pass an Io that records output instead of writing to the terminal.

export interface Io {
  out(text: string): void;
  err(text: string): void;
  cwd: string;
  env: Record<string, string | undefined>;
  /** Whether stdout is a terminal (colour only then). */
  isTty: boolean;
  /** Whether stderr is a terminal (progress lines only then). */
  errIsTty?: boolean;
}

export function nodeIo(): Io {
  return {
    out: (text) => process.stdout.write(text),
    err: (text) => process.stderr.write(text),
    cwd: process.cwd(),
    env: process.env,
    isTty: !!process.stdout.isTTY,
    errIsTty: !!process.stderr.isTTY,
  };
}

/** An Io that collects output, for tests. */
export function memoryIo(cwd = process.cwd()): Io & { stdout: string; stderr: string } {
  const io = {
    stdout: '',
    stderr: '',
    out(text: string) {
      io.stdout += text;
    },
    err(text: string) {
      io.stderr += text;
    },
    cwd,
    env: {} as Record<string, string | undefined>,
    isTty: false,
  };
  return io;
}
