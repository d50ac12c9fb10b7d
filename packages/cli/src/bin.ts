#!/usr/bin/env node
// The `tuningfork` command. Everything heavy is imported lazily by the command that needs it,
// so `tuningfork --help` starts fast.
import { main } from './main.js';

process.exitCode = await main(process.argv.slice(2));
