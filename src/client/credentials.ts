/**
 * The per-user credentials file `nkledger login` writes: one bearer token per server URL, readable by its owner
 * only (mode 0600, in a folder of mode 0700). `$NKLEDGER_CREDENTIALS` names the file; else
 * `$XDG_CONFIG_HOME/nkledger/credentials.json`, else `~/.config/nkledger/credentials.json`. `NKLEDGER_TOKEN`
 * wins over the file. The token is a secret: it is never taken as a command-line argument (argument lists are
 * visible to every user of the machine and land in shell history).
 */
import { chmodSync, mkdirSync, readFileSync, renameSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { homedir } from 'node:os';
import { dirname, join } from 'node:path';
import { EnvironmentError, InputError } from '../errors.ts';

export const CREDENTIALS_FORMAT = 'nkledger-credentials';

export interface SavedCredential {
  token: string;
  user: string;
  role: string;
  saved_at: string;
}

interface CredentialsFile {
  format: typeof CREDENTIALS_FORMAT;
  servers: Record<string, SavedCredential>;
}

type Env = Record<string, string | undefined>;

export function credentialsPath(env: Env): string {
  if (env.NKLEDGER_CREDENTIALS) return env.NKLEDGER_CREDENTIALS;
  const config = env.XDG_CONFIG_HOME || join(env.HOME || homedir(), '.config');
  return join(config, 'nkledger', 'credentials.json');
}

function read(path: string): CredentialsFile {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === 'ENOENT') return { format: CREDENTIALS_FORMAT, servers: {} };
    throw new EnvironmentError('credentials-unreadable', `cannot read the credentials file ${path} (${(err as NodeJS.ErrnoException).code})`);
  }
  try {
    const data = JSON.parse(text) as CredentialsFile;
    if (data.format !== CREDENTIALS_FORMAT || typeof data.servers !== 'object' || data.servers === null) throw new Error('format');
    return data;
  } catch {
    throw new InputError('credentials-invalid', `${path} is not an nkledger credentials file; remove it and log in again (nkledger login URL)`, {
      file: path,
    });
  }
}

/** Write through a temporary file created with mode 0600, then rename: the token is never readable by others. */
function write(path: string, data: CredentialsFile): void {
  mkdirSync(dirname(path), { recursive: true, mode: 0o700 });
  const temp = `${path}.${process.pid}.tmp`;
  try {
    writeFileSync(temp, `${JSON.stringify(data, null, 2)}\n`, { mode: 0o600 });
    chmodSync(temp, 0o600); // the mode of writeFileSync is filtered by the umask; make it exact
    renameSync(temp, path);
  } catch (err) {
    rmSync(temp, { force: true });
    throw new EnvironmentError('credentials-unwritable', `cannot write the credentials file ${path} (${(err as NodeJS.ErrnoException).code})`);
  }
}

export function saveCredential(env: Env, url: string, credential: SavedCredential): string {
  const path = credentialsPath(env);
  const data = read(path);
  data.servers[url] = credential;
  write(path, data);
  return path;
}

/** Forget the token of `url`; returns whether there was one. */
export function removeCredential(env: Env, url: string): { path: string; removed: boolean } {
  const path = credentialsPath(env);
  const data = read(path);
  if (!(url in data.servers)) return { path, removed: false };
  delete data.servers[url];
  write(path, data);
  return { path, removed: true };
}

/**
 * The token to send to `url`: NKLEDGER_TOKEN, else the saved one, else none (anonymous reads). A credentials
 * file that others may read is refused rather than used: its token may already be someone else's too.
 */
export function tokenFor(env: Env, url: string): string | undefined {
  if (env.NKLEDGER_TOKEN) return env.NKLEDGER_TOKEN.trim();
  const path = credentialsPath(env);
  const data = read(path);
  const saved = data.servers[url];
  if (!saved) return undefined;
  const mode = statSync(path).mode & 0o077;
  if (mode !== 0)
    throw new InputError(
      'credentials-too-open',
      `${path} can be read by other users (mode ${(statSync(path).mode & 0o777).toString(8)}); run chmod 600 ${path}, and if others could read it, have an admin revoke the token and log in again`,
      { file: path },
    );
  return saved.token;
}
