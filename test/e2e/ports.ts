/** Fixed ports of the end-to-end servers (127.0.0.1 only). */
export const DEMO_PORT = 5817;
export const BENCH_PORT = 5818;
