/**
 * Version of the kinetics engine, printed in every method statement and stored with every
 * analysis, so a result can be traced to the code that computed it.
 *
 * A constant, bumped by hand on each release that changes any number the engine produces; it is
 * deliberately not read from package.json or the environment at run time, so that the same code
 * always reports the same version wherever it runs (browser, server, command line).
 *
 * Example: `ENGINE_VERSION` is '0.4.0'.
 */
export const ENGINE_VERSION = '0.4.0';
