// The execution environment an RV32I program sees when it executes ECALL: the two Linux system
// calls that test programs use, with the RISC-V Linux calling convention (number in a7, arguments
// in a0..a2, result in a0). It is the same subset qemu-riscv32 user mode provides, so a program's
// stdout and exit code can be compared between qemu and our machines.
//
//   a7 = 64 (write):  write(fd = a0, buf = a1, count = a2). fd 1 and 2 append the bytes to the
//                     captured stdout/stderr and return count in a0; any other fd returns
//                     -9 (EBADF) in a0, as Linux does for a descriptor that is not open.
//   a7 = 93 (exit) and 94 (exit_group): stop with exit code a0 & 0xff (what a parent process sees).
//   anything else:    the machine stops with an "unsupported system call" outcome.
// Syscall numbers are those of the generic Linux syscall table that RISC-V uses
// (include/uapi/asm-generic/unistd.h: __NR_write 64, __NR_exit 93, __NR_exit_group 94; from memory
// of the kernel header, confirmed by running programs under qemu-riscv32).
//
// The environment does not know how registers are stored: a caller passes a `MachineAccess`
// (readRegister, writeRegister, memory), so the reference interpreter and a bus-level simulator
// of a microcoded machine share this code and therefore agree on every system call.
//
// Deliberately not here: reading input (there is no stdin), files, time, memory allocation
// syscalls, signals. Output is captured in memory up to a limit (default 16 MiB) so a runaway
// program cannot exhaust the host; exceeding it stops the machine with a clear outcome.
import type { Memory } from './memory';

export const SYSCALL_WRITE = 64;
export const SYSCALL_EXIT = 93;
export const SYSCALL_EXIT_GROUP = 94;
/** Linux errno EBADF, returned negated in a0 (asm-generic/errno-base.h; from memory). */
export const ERRNO_EBADF = 9;

/** Register numbers of the calling-convention registers the environment uses (psABI). */
export const REG_A0 = 10;
export const REG_A1 = 11;
export const REG_A2 = 12;
export const REG_A7 = 17;

/** What the environment needs from a machine to serve a system call. */
export interface MachineAccess {
  /** Value of x[index] as a signed or unsigned 32-bit number (x0 reads 0). */
  readRegister(index: number): number;
  /** Sets x[index]; writes to x0 are ignored. */
  writeRegister(index: number, value: number): void;
  readonly memory: Memory;
}

export type EcallOutcome =
  /** The call was served; the machine continues at pc + 4. */
  | { readonly kind: 'continue' }
  /** exit/exit_group: `exitCode` is status & 0xff; `status` is the full a0 value (signed). */
  | { readonly kind: 'exit'; readonly exitCode: number; readonly status: number }
  /** A system call number this environment does not implement. */
  | { readonly kind: 'unsupported-syscall'; readonly syscallNumber: number }
  /** A write would take the captured output past `outputLimitBytes`; nothing was written. */
  | { readonly kind: 'output-limit'; readonly outputLimitBytes: number };

export interface EnvironmentOptions {
  /** Maximum total bytes captured on stdout plus stderr (default 16 MiB). */
  outputLimitBytes?: number;
}

const CONTINUE: EcallOutcome = { kind: 'continue' };

/** A growable byte buffer: amortised O(1) appends without a chunk list. */
class ByteSink {
  private buffer = new Uint8Array(256);
  private used = 0;

  append(bytes: Uint8Array): void {
    if (this.used + bytes.length > this.buffer.length) {
      let capacity = this.buffer.length * 2;
      while (capacity < this.used + bytes.length) capacity *= 2;
      const grown = new Uint8Array(capacity);
      grown.set(this.buffer.subarray(0, this.used));
      this.buffer = grown;
    }
    this.buffer.set(bytes, this.used);
    this.used += bytes.length;
  }

  get length(): number {
    return this.used;
  }

  /** Forgets everything after the first `length` bytes. */
  truncate(length: number): void {
    this.used = Math.min(this.used, Math.max(0, length));
  }

  bytes(): Uint8Array {
    return this.buffer.slice(0, this.used);
  }
}

/** Linux user-mode system calls write and exit, with captured stdout and stderr. */
export class LinuxUserEnvironment {
  private readonly stdoutSink = new ByteSink();
  private readonly stderrSink = new ByteSink();
  readonly outputLimitBytes: number;

  constructor(options: EnvironmentOptions = {}) {
    this.outputLimitBytes = options.outputLimitBytes ?? 16 * 1024 * 1024;
  }

  /** Serves the ECALL the machine is executing; the caller advances the pc on 'continue'. */
  handleEcall(machine: MachineAccess): EcallOutcome {
    const syscallNumber = machine.readRegister(REG_A7) | 0;
    switch (syscallNumber) {
      case SYSCALL_WRITE:
        return this.write(machine);
      case SYSCALL_EXIT:
      case SYSCALL_EXIT_GROUP: {
        const status = machine.readRegister(REG_A0) | 0;
        return { kind: 'exit', exitCode: status & 0xff, status };
      }
      default:
        return { kind: 'unsupported-syscall', syscallNumber };
    }
  }

  private write(machine: MachineAccess): EcallOutcome {
    const fd = machine.readRegister(REG_A0) | 0;
    const bufferAddress = machine.readRegister(REG_A1) >>> 0;
    const countBytes = machine.readRegister(REG_A2) >>> 0;
    const sink = fd === 1 ? this.stdoutSink : fd === 2 ? this.stderrSink : null;
    if (!sink) {
      machine.writeRegister(REG_A0, -ERRNO_EBADF);
      return CONTINUE;
    }
    if (this.stdoutSink.length + this.stderrSink.length + countBytes > this.outputLimitBytes) {
      return { kind: 'output-limit', outputLimitBytes: this.outputLimitBytes };
    }
    sink.append(machine.memory.readBytes(bufferAddress, countBytes));
    machine.writeRegister(REG_A0, countBytes);
    return CONTINUE;
  }

  /** Bytes the program wrote to fd 1 so far (a copy). */
  stdout(): Uint8Array {
    return this.stdoutSink.bytes();
  }

  /** Bytes the program wrote to fd 2 so far (a copy). */
  stderr(): Uint8Array {
    return this.stderrSink.bytes();
  }

  /** Bytes captured so far on stdout and stderr (a mark for truncateOutput). */
  outputLengths(): [stdoutBytes: number, stderrBytes: number] {
    return [this.stdoutSink.length, this.stderrSink.length];
  }

  /** Takes the captured output back to an earlier mark (the debugger stepping backwards). */
  truncateOutput(stdoutBytes: number, stderrBytes: number): void {
    this.stdoutSink.truncate(stdoutBytes);
    this.stderrSink.truncate(stderrBytes);
  }

  /** Captured stdout as text, bytes taken as Latin-1 (test programs print ASCII). */
  stdoutText(): string {
    return latin1(this.stdoutSink.bytes());
  }

  /** Captured stderr as text, bytes taken as Latin-1. */
  stderrText(): string {
    return latin1(this.stderrSink.bytes());
  }
}

function latin1(bytes: Uint8Array): string {
  let text = '';
  const chunkBytes = 8192;
  for (let start = 0; start < bytes.length; start += chunkBytes) {
    text += String.fromCharCode(...bytes.subarray(start, start + chunkBytes));
  }
  return text;
}
