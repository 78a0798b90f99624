// Types for build.mjs, so TypeScript tests can import it.
export interface TestProgram {
  name: string;
  sources: string[];
  defines: Record<string, string | number>;
  kind: 'exit' | 'ebreak';
  description: string;
}
export interface BuiltProgram {
  name: string;
  elfPath: string;
  kind: 'exit' | 'ebreak';
  description: string;
}
export const PROGRAMS_SOURCE_DIR: string;
export const DEFAULT_OUTPUT_DIR: string;
export const GCC: string;
export const COMMON_FLAGS: string[];
export const PROGRAMS: TestProgram[];
export function buildPrograms(options?: { outputDir?: string; names?: string[] }): BuiltProgram[];
