export declare const bundlePath: string
export declare function bundleIsStale(): boolean
export declare function buildCliBundle(): Promise<string>
export declare function ensureCliBundle(): Promise<string>
