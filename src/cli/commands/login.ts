/**
 * `nkledger login URL`: keep the bearer token for a server in the per-user
 * credentials file (src/client/credentials.ts), so server-mode commands need no token in the environment. The
 * token is read from standard input or typed at a prompt that does not echo it, never taken as an argument.
 */
import type { Command } from 'commander';
import { saveCredential } from '../../client/credentials.ts';
import { normalizeServerUrl } from '../../client/http.ts';
import { InputError } from '../../errors.ts';
import { guarded } from '../failure.ts';
import { cliIo } from '../io.ts';
import { printJson, printLines } from '../output.ts';
import { serverClient } from '../registry-access.ts';

/** The token: typed at a prompt on a terminal (not echoed), else the first line of standard input. */
async function readToken(): Promise<string> {
  const stdin = cliIo().stdin as AsyncIterable<Buffer | string> & { isTTY?: boolean; setRawMode?: (raw: boolean) => void };
  if (stdin.isTTY && stdin.setRawMode) return promptHidden(stdin as NodeJS.ReadStream);
  let text = '';
  for await (const chunk of stdin) {
    text += chunk.toString();
    if (text.length > 4096) break;
  }
  return text.split(/\r?\n/)[0].trim();
}

function promptHidden(stdin: NodeJS.ReadStream): Promise<string> {
  cliIo().stderr.write('token (input hidden): ');
  return new Promise((resolve, reject) => {
    let typed = '';
    stdin.setRawMode(true);
    stdin.resume();
    const done = (fn: () => void) => {
      stdin.setRawMode(false);
      stdin.pause();
      stdin.off('data', onData);
      cliIo().stderr.write('\n');
      fn();
    };
    const onData = (chunk: Buffer) => {
      for (const ch of chunk.toString()) {
        if (ch === '\r' || ch === '\n') return done(() => resolve(typed.trim()));
        if (ch === '\u0003') return done(() => reject(new InputError('login-cancelled', 'login cancelled')));
        if (ch === '\u007f' || ch === '\b') typed = typed.slice(0, -1);
        else typed += ch;
      }
    };
    stdin.on('data', onData);
  });
}

export function register(program: Command): void {
  program
    .command('login')
    .description('save a bearer token for an nkledger server in your credentials file (mode 0600), checked with the server first')
    .argument('<url>', 'the server, e.g. http://lab-server:8787')
    .option('--json', 'print {"server", "user", "role", "credentials"} as JSON')
    .addHelpText(
      'after',
      '\nThe token is read from standard input, or typed at a prompt that does not show it; never give it as an argument.\n' +
        'The file is $NKLEDGER_CREDENTIALS, else $XDG_CONFIG_HOME/nkledger/credentials.json (~/.config/…). $NKLEDGER_TOKEN wins over it.\n\n' +
        'Examples:\n  nkledger login http://lab-server:8787\n  pass show nkledger | nkledger login http://lab-server:8787',
    )
    .action(
      guarded(async (url: string, opts: { json?: boolean }) => {
        const server = normalizeServerUrl(url);
        const token = await readToken();
        if (!token) throw new InputError('login-no-token', 'no token given: type it at the prompt or pipe it to standard input');
        const who = await serverClient(server, token).json<{ user: string; role: string }>('GET', '/whoami');
        const path = saveCredential(cliIo().env, server, { token, user: who.user, role: who.role, saved_at: new Date().toISOString() });
        if (opts.json) return printJson({ server, user: who.user, role: who.role, credentials: path });
        printLines([`logged in to ${server} as ${who.user} (role ${who.role}); token saved in ${path}`]);
      }),
    );
}
