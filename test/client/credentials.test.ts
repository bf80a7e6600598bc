/**
 * The credentials file and server URLs: tokens kept per server URL with mode 0600, NKLEDGER_TOKEN first, a file
 * others can read refused; URLs normalized the way people paste them.
 */
import { chmodSync, mkdtempSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { credentialsPath, removeCredential, saveCredential, tokenFor } from '../../src/client/credentials.ts';
import { normalizeServerUrl } from '../../src/client/http.ts';
import { InputError } from '../../src/errors.ts';

const dir = mkdtempSync(join(tmpdir(), 'nkledger-credentials-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('credentials', () => {
  it('path: NKLEDGER_CREDENTIALS, else XDG_CONFIG_HOME, else ~/.config', () => {
    expect(credentialsPath({ NKLEDGER_CREDENTIALS: '/x/c.json', XDG_CONFIG_HOME: '/y' })).toBe('/x/c.json');
    expect(credentialsPath({ XDG_CONFIG_HOME: '/y' })).toBe('/y/nkledger/credentials.json');
    expect(credentialsPath({ HOME: '/home/ada' })).toBe('/home/ada/.config/nkledger/credentials.json');
  });

  it('keeps one token per server, mode 0600; NKLEDGER_TOKEN wins; a readable file is refused', () => {
    const env = { NKLEDGER_CREDENTIALS: join(dir, 'sub', 'credentials.json') };
    const saved = { user: 'ada', role: 'admin', saved_at: '2026-01-01T00:00:00.000Z' };
    saveCredential(env, 'http://a:8787', { token: 'nkl_a', ...saved });
    saveCredential(env, 'http://b:8787', { token: 'nkl_b', ...saved });
    expect(statSync(env.NKLEDGER_CREDENTIALS).mode & 0o777).toBe(0o600);
    expect(tokenFor(env, 'http://a:8787')).toBe('nkl_a');
    expect(tokenFor(env, 'http://c:8787')).toBeUndefined();
    expect(tokenFor({ ...env, NKLEDGER_TOKEN: 'nkl_env' }, 'http://a:8787')).toBe('nkl_env');
    chmodSync(env.NKLEDGER_CREDENTIALS, 0o644);
    expect(() => tokenFor(env, 'http://a:8787')).toThrow(expect.objectContaining({ rule: 'credentials-too-open' }));
    chmodSync(env.NKLEDGER_CREDENTIALS, 0o600);
    expect(removeCredential(env, 'http://a:8787').removed).toBe(true);
    expect(tokenFor(env, 'http://a:8787')).toBeUndefined();
    expect(tokenFor(env, 'http://b:8787')).toBe('nkl_b');
  });
});

describe('server URLs', () => {
  it('are normalized: a trailing slash or /api/v1 is dropped; anything but http(s) is refused', () => {
    expect(normalizeServerUrl('http://lab-server:8787/')).toBe('http://lab-server:8787');
    expect(normalizeServerUrl('https://lab.example.org/nk/api/v1/')).toBe('https://lab.example.org/nk');
    expect(normalizeServerUrl(' http://127.0.0.1:8787 ')).toBe('http://127.0.0.1:8787');
    for (const bad of ['lab-server:8787', 'ftp://x', 'http://u:p@x', 'http://x/?a=1', ''])
      expect(() => normalizeServerUrl(bad), bad).toThrow(InputError);
  });
});
