/** commands/index.ts names every command with a one-line summary; each module registers exactly the command its entry names. */
import { Command } from 'commander';
import { describe, expect, it } from 'vitest';
import { COMMANDS } from '../../src/cli/commands/index.ts';
import { runCli } from './run-cli.ts';

describe('the command list', () => {
  it('each entry loads a module that registers one command of that name, with a description', async () => {
    expect(new Set(COMMANDS.map((c) => c.name)).size).toBe(COMMANDS.length);
    for (const entry of COMMANDS) {
      const program = new Command();
      (await entry.load()).register(program);
      expect(
        program.commands.map((c) => c.name()),
        entry.name,
      ).toEqual([entry.name]);
      expect(program.commands[0].description().length, entry.name).toBeGreaterThan(0);
      expect(entry.summary.length, entry.name).toBeLessThanOrEqual(90);
    }
  });

  it('--help lists every command with its summary, in order; each command has its own --help', async () => {
    const top = await runCli(['--help']);
    expect(top.code).toBe(0);
    const listed = [...top.stdout.matchAll(/^  ([a-z][a-z-]*) /gm)].map((m) => m[1]).filter((c) => c !== 'help');
    expect(listed).toEqual(COMMANDS.map((c) => c.name));
    for (const entry of COMMANDS) {
      const r = await runCli([entry.name, '--help']);
      expect(r.code, entry.name).toBe(0);
      expect(r.stdout).toMatch(new RegExp(`^Usage: nkledger ${entry.name} `));
      const viaHelp = await runCli(['help', entry.name]);
      expect(viaHelp.stdout).toBe(r.stdout);
    }
  });

  it('an unknown command is a usage error (exit 2) with a suggestion', async () => {
    const r = await runCli(['evl', 'x']);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/unknown command 'evl'[\s\S]*Did you mean eval\?/);
  });
});
