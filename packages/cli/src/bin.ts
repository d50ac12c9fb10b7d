#!/usr/bin/env node
// The `tuningfork` command. Everything heavy is imported lazily by the command that needs it,
// so `tuningfork --help` starts fast.
import { EXIT_CODES } from './exit-codes.js';
import { main } from './main.js';

// A reader that stops early (`tuningfork run --help | head`) closes the pipe: stop quietly with
// 141 (128 + SIGPIPE), as command-line tools killed by SIGPIPE do, instead of printing an EPIPE
// stack trace. Outputs stay whole: every file is written through a staging folder or renamed.
for (const stream of [process.stdout, process.stderr]) {
  stream.on('error', (e: NodeJS.ErrnoException) => {
    if (e.code === 'EPIPE') process.exit(EXIT_CODES.outputClosed);
    throw e;
  });
}

process.exitCode = await main(process.argv.slice(2));
