// The tool's version as recorded in manifests and printed by --version.
declare const __PHASEWRIGHT_VERSION__: string | undefined;
export const VERSION = typeof __PHASEWRIGHT_VERSION__ === 'string' ? __PHASEWRIGHT_VERSION__ : '0.1.0';
