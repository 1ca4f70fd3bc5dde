import pkg from '../../package.json';

/**
 * The engine's version as a snapshot records it: the package version, which changes with every release that can
 * change a number. A reviewer reproducing an analysis runs the command line of that version.
 */
export const ENGINE_VERSION: string = pkg.version;
