/** The software version stored with every run record. Keep in step with package.json. */
export const VERSION = '0.1.0';
