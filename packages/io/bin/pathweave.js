#!/usr/bin/env node
// Entry point of the `pathweave` command; the compiled CLI lives in dist/.

// Until a command puts in handlers of its own (generate and merge clean up their temporaries),
// SIGINT and SIGTERM end the process with exit 1 and a message, as an interrupted run does,
// instead of the default death by signal while the modules load.
const early = (signal) => {
  if (process.listenerCount(signal) > 1) return; // the command's own handler answers
  process.stderr.write(`error: interrupted by ${signal}; nothing was written\n`);
  process.exit(1);
};
process.on('SIGINT', early);
process.on('SIGTERM', early);

// A reader that closes the pipe early (`pathweave paths x.json | head`) ends the output, not the
// command: later writes are dropped and the command finishes with its own exit code.
for (const stream of [process.stdout, process.stderr]) {
  stream.on('error', (e) => {
    if (e.code !== 'EPIPE' && e.code !== 'ERR_STREAM_DESTROYED') throw e;
  });
}

// The bundle of the command (scripts/bundle-cli.mjs: one file for most of what a command loads,
// instead of about 200) when it was built; PATHWEAVE_UNBUNDLED=1 runs the modules one by one.
const { existsSync } = await import('node:fs');
const bundled = new URL('../dist/bundle/main.js', import.meta.url);
const { main } = await import(process.env.PATHWEAVE_UNBUNDLED !== '1' && existsSync(bundled) ? bundled.href : '../dist/cli/main.js');
process.exitCode = await main(process.argv.slice(2));
