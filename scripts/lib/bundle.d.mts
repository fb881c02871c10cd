/** Types of scripts/lib/bundle.mjs. */
export declare function bundle(entry: string, out: string): Promise<string>;
export declare function freshBundle(entry: string, out: string): Promise<string>;
