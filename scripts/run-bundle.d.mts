// Types of scripts/run-bundle.mjs for the TypeScript that imports it (its tests).
export declare const cachePath: (bundle: string) => string;
export declare function runBundle(bundle: string, args: string[]): void;
