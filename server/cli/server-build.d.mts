// Types of server-build.mjs (plain JavaScript so that it runs without a TypeScript loader).
export declare const repoRoot: string;
export declare const serverDist: string;
export declare const SERVER_ENTRIES: Record<string, string>;
export declare const BUNDLED_WORKERS: Record<string, string>;
export declare function serverBuildReason(): string | null;
export declare function buildServer(): Promise<void>;
export declare function ensureServerBuild(name: string, options?: { quiet?: boolean }): Promise<string>;
