/** Every CLI command, in the order `nkledger --help` lists them. Add a command by adding its register function here. */
import type { Command } from 'commander';
import * as token from './token.ts';
import * as settings from './settings.ts';
import * as serve from './serve.ts';
import * as inspect from './inspect.ts';
import * as evaluate from './eval.ts';
import * as convert from './convert.ts';
import * as demo from './demo.ts';
import * as kk from './kk.ts';
import * as fit from './fit.ts';
import * as material from './material.ts';
import * as importCmd from './import.ts';
import * as show from './show.ts';
import * as list from './list.ts';
import * as history from './history.ts';
import * as approve from './approve.ts';
import * as retire from './retire.ts';
import * as withdraw from './withdraw.ts';
import * as lock from './lock.ts';
import * as verify from './verify.ts';
import * as backup from './backup.ts';
import * as diff from './diff.ts';
import * as exportCmd from './export.ts';

type Register = (program: Command) => void;

const commands: Register[] = [demo.register, inspect.register, evaluate.register, convert.register, fit.register, kk.register, serve.register, token.register, settings.register,
  material.register, importCmd.register, show.register, list.register, history.register, approve.register, retire.register,
  withdraw.register, lock.register, verify.register, backup.register, diff.register, exportCmd.register];

export function registerCommands(program: Command): void {
  for (const register of commands) register(program);
}
