/** `nkledger logout [URL]`: forget the saved token of a server (src/client/credentials.ts). */
import type { Command } from 'commander';
import { credentialsPath, removeCredential } from '../../client/credentials.ts';
import { normalizeServerUrl } from '../../client/http.ts';
import { InputError } from '../../errors.ts';
import { guarded } from '../failure.ts';
import { cliIo } from '../io.ts';
import { printJson, printLines } from '../output.ts';

export function register(program: Command): void {
  program
    .command('logout')
    .description('forget the saved token of a server (it stays valid on the server: an admin revokes it with `nkledger token revoke`)')
    .argument('[url]', 'the server (default: $NKLEDGER_SERVER)')
    .option('--json', 'print {"server", "removed", "credentials"} as JSON')
    .action(
      guarded(async (url: string | undefined, opts: { json?: boolean }) => {
        const given = url ?? cliIo().env.NKLEDGER_SERVER;
        if (!given) throw new InputError('logout-no-server', 'name the server to log out of: nkledger logout URL');
        const server = normalizeServerUrl(given);
        const { path, removed } = removeCredential(cliIo().env, server);
        if (opts.json) return printJson({ server, removed, credentials: path });
        printLines([
          removed ? `logged out of ${server}; its token was removed from ${path}` : `no saved token for ${server} in ${credentialsPath(cliIo().env)}`,
        ]);
      }),
    );
}
