/**
 * @module @pathweave/io/cli
 * The `pathweave` command line as a function: `main(argv)` resolves to the exit code
 * (0 done, 1 failure while running, 2 input or command line refused).
 */
export { main } from './main.js';
