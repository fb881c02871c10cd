/** Types of scripts/build-worker.mjs. */
export declare const WORKER_OUT: string;
export declare function buildWorker(): Promise<string>;
export declare const INTERACTIVE_WORKER_OUT: string;
