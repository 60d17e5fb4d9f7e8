// Types of scripts/build-cli.mjs for the TypeScript that imports it (its tests).
export declare const CLI_COMMANDS: readonly string[];
export declare const CLI_OUTDIR: string;
export declare function bundlePath(command: string, outdir?: string): string;
export declare function buildCli(outdir?: string): Promise<void>;
export declare function cliBuildIsStale(outdir?: string): boolean;
export declare function ensureCliBuild(outdir?: string): Promise<void>;
