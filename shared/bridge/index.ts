export * from './calls.js';
export * from './envelope.js';
export * from './types.js';
export * from './validate.js';
export * from './client.js';
export * from './csp.js';
export * from './preload-api.js';
