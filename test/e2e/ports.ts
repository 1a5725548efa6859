/**
 * Ports of the end-to-end servers (127.0.0.1 only). `DEFLATOR_E2E_PORT` moves both, so
 * two checkouts can run the browser suite at once without one testing the other's server.
 */
const base = Number(process.env.DEFLATOR_E2E_PORT ?? '5817');
export const DEMO_PORT = Number.isInteger(base) && base > 1024 && base < 65535 ? base : 5817;
export const BENCH_PORT = DEMO_PORT + 1;
