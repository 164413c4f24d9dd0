#!/usr/bin/env node
import { Command, CommanderError } from 'commander';
import { packageVersion } from '../io/projectRoot.js';
import { commands } from './commands.js';

export function buildProgram(): Command {
  const program = new Command();
  program
    .name('glowprint')
    .description(
      'Calibrated answers from optics-bench photos and scope traces: which gas, how polarized, what line density, how many modes.',
    )
    .version(packageVersion())
    .showHelpAfterError('(run with --help for usage)')
    .exitOverride();
  for (const register of commands) register(program);
  return program;
}

async function main(): Promise<void> {
  // A reader that stops early (`glowprint calibrate --help | head`) closes the pipe: that ends the output, not in error.
  process.stdout.on('error', (err: NodeJS.ErrnoException) => {
    if (err.code !== 'EPIPE') throw err;
    process.exit(process.exitCode ?? 0);
  });
  const program = buildProgram();
  try {
    await program.parseAsync(process.argv);
  } catch (err) {
    if (err instanceof CommanderError) {
      // Help and version exit 0; every usage mistake exits 2 (the contract: 0 ok, 1 bad input, 2 usage).
      process.exitCode = err.exitCode === 0 ? 0 : 2;
      return;
    }
    throw err;
  }
}

await main();
