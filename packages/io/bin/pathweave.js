#!/usr/bin/env node
// Entry point of the `pathweave` command; the compiled CLI lives in dist/.
import { main } from '../dist/cli/main.js';

process.exitCode = await main(process.argv.slice(2));
