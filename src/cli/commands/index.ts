/** Every CLI command, in the order `nkledger --help` lists them. Add a command by adding its register function here. */
import type { Command } from 'commander';
import * as token from './token.ts';
import * as settings from './settings.ts';
import * as serve from './serve.ts';
import * as inspect from './inspect.ts';
import * as evaluate from './eval.ts';
import * as convert from './convert.ts';
import * as demo from './demo.ts';

type Register = (program: Command) => void;

const commands: Register[] = [demo.register, inspect.register, evaluate.register, convert.register, serve.register, token.register, settings.register];

export function registerCommands(program: Command): void {
  for (const register of commands) register(program);
}
