/** Every CLI command, in the order `nkledger --help` lists them. Add a command by adding its register function here. */
import type { Command } from 'commander';

type Register = (program: Command) => void;

const commands: Register[] = [];

export function registerCommands(program: Command): void {
  for (const register of commands) register(program);
}
