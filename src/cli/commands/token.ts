/** `nkledger token create|list|revoke`: bearer tokens for the HTTP API. The secret is printed once; only its hash is kept. */
import type { Command } from 'commander';
import { createToken, listTokens, revokeToken } from '../../service/tokens.ts';
import { TOKEN_ROLES } from '../../registry/schema-auth.ts';
import { guarded } from '../failure.ts';
import { formatTable, printJson, printLines } from '../output.ts';
import { actorFrom, addAsOption, addDbOption, withRegistry } from '../admin-options.ts';

export function register(program: Command): void {
  const token = program.command('token').description('manage bearer tokens for the HTTP API (`nkledger serve`)');

  addAsOption(addDbOption(token.command('create')))
    .description(`create a token for a user with a role (${TOKEN_ROLES.join(' < ')}); prints the token once`)
    .requiredOption('--user <name>', 'the person or tool the token is for')
    .requiredOption('--role <role>', `one of ${TOKEN_ROLES.join(', ')}`)
    .option('--json', 'print {"token", "id", "user", "role", ...} as JSON')
    .action(
      guarded(async (opts: { db?: string; as?: string; user: string; role: string; json?: boolean }) => {
        const created = await withRegistry(opts, (r) => createToken(r, { user: opts.user, role: opts.role, createdBy: actorFrom(opts) }));
        if (opts.json) return printJson(created);
        printLines([
          created.token,
          '',
          `token ${created.id} for ${created.user} (role ${created.role}).`,
          'This is the only time the token is shown: the registry keeps only its SHA-256.',
          'Send it as the header "Authorization: Bearer <token>".',
        ]);
      }),
    );

  addDbOption(token.command('list'))
    .description('list tokens (never their secrets); revoked ones show when and by whom')
    .option('--active', 'only tokens that are not revoked')
    .option('--json', 'print JSON')
    .action(
      guarded(async (opts: { db?: string; active?: boolean; json?: boolean }) => {
        const tokens = await withRegistry(opts, (r) => listTokens(r, { activeOnly: opts.active }));
        if (opts.json) return printJson(tokens);
        const rows = tokens.map((t) => [
          t.id,
          t.user,
          t.role,
          t.created_at,
          t.created_by,
          t.revoked_at ? `revoked ${t.revoked_at} by ${t.revoked_by}` : 'active',
        ]);
        printLines(formatTable(['id', 'user', 'role', 'created', 'by', 'state'], rows));
      }),
    );

  addAsOption(addDbOption(token.command('revoke')))
    .description('revoke a token by id (see `token list`); it is refused from then on')
    .argument('<id>', 'token id, e.g. tok_1a2b3c4d5e6f')
    .option('--json', 'print JSON')
    .action(
      guarded(async (id: string, opts: { db?: string; as?: string; json?: boolean }) => {
        const revoked = await withRegistry(opts, (r) => revokeToken(r, id, actorFrom(opts)));
        if (opts.json) return printJson(revoked);
        printLines([`revoked ${revoked.id} (${revoked.user}, ${revoked.role}) at ${revoked.revoked_at}`]);
      }),
    );
}
