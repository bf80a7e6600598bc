/** `nkledger token create|list|revoke`: bearer tokens for the HTTP API. The secret is printed once; only its hash is kept. */
import type { Command } from 'commander';
import { TOKEN_ROLES } from '../../registry/schema-auth.ts';
import { guarded } from '../failure.ts';
import { formatTable, printJson, printLines } from '../output.ts';
import { addAsOption } from '../admin-options.ts';
import { addRegistryOptions, registryOps, type RegistryFlags } from '../registry-access.ts';
import { shortTime } from '../registry-output.ts';

export function register(program: Command): void {
  const token = program.command('token').description('manage bearer tokens for the HTTP API (`nkledger serve`)');

  addAsOption(addRegistryOptions(token.command('create')))
    .description(`create a token for a user with a role (${TOKEN_ROLES.join(' < ')}); prints the token once`)
    .requiredOption('--user <name>', 'the person or tool the token is for')
    .requiredOption('--role <role>', `one of ${TOKEN_ROLES.join(', ')}`)
    .option(
      '--expires <lifetime>',
      'how long it works: days or hours (90d, 12h, at most 3650d) or never (default: the token_lifetime setting, 90d unless changed)',
    )
    .option('--json', 'print {"token", "id", "user", "role", "expires_at", ...} as JSON')
    .addHelpText(
      'after',
      '\nExamples:\n  nkledger token create --user anna --role editor\n  nkledger token create --user design-tool --role reader --expires 365d',
    )
    .action(
      guarded(async (opts: RegistryFlags & { user: string; role: string; expires?: string; json?: boolean }) => {
        const created = await registryOps(opts).createToken({ user: opts.user, role: opts.role, expires: opts.expires });
        if (opts.json) return printJson(created);
        printLines([
          created.token,
          '',
          `token ${created.id} for ${created.user} (role ${created.role}), ${created.expires_at ? `expires ${shortTime(created.expires_at)}` : 'never expires'}.`,
          'This is the only time the token is shown: the registry keeps only its SHA-256.',
          'Send it as the header "Authorization: Bearer <token>".',
        ]);
      }),
    );

  addRegistryOptions(token.command('list'))
    .description('list tokens (never their secrets): expiry, last use (to within an hour), and when and by whom revoked ones were')
    .option('--active', 'only tokens that work: neither revoked nor expired')
    .option('--json', 'print JSON')
    .action(
      guarded(async (opts: RegistryFlags & { active?: boolean; json?: boolean }) => {
        const tokens = await registryOps(opts).listTokens({ activeOnly: opts.active });
        if (opts.json) return printJson(tokens);
        const rows = tokens.map((t) => [
          t.id,
          t.user,
          t.role,
          shortTime(t.created_at),
          t.created_by,
          t.expires_at ? shortTime(t.expires_at) : 'never',
          t.last_used_at ? shortTime(t.last_used_at) : 'never',
          t.revoked_at ? `revoked ${t.revoked_at} by ${t.revoked_by}` : t.expired ? 'expired' : 'active',
        ]);
        printLines(formatTable(['id', 'user', 'role', 'created', 'by', 'expires', 'last used', 'state'], rows));
      }),
    );

  addAsOption(addRegistryOptions(token.command('revoke')))
    .description('revoke a token by id (see `token list`); it is refused from then on')
    .argument('<id>', 'token id, e.g. tok_1a2b3c4d5e6f')
    .option('--json', 'print JSON')
    .action(
      guarded(async (id: string, opts: RegistryFlags & { json?: boolean }) => {
        const revoked = await registryOps(opts).revokeToken(id);
        if (opts.json) return printJson(revoked);
        printLines([`revoked ${revoked.id} (${revoked.user}, ${revoked.role}) at ${revoked.revoked_at}`]);
      }),
    );
}
