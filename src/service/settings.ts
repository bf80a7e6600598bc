/**
 * Every setting a lab can change — the registry's rules and the HTTP API's — kept in the registry (table
 * registry_settings), so the CLI, the approval rule and a running `nkledger serve` agree on them. The catalogue
 * below is the only place a setting is defined: its value schema, default, and meaning; `nkledger settings`,
 * the API's /settings routes and the docs iterate it. Every change appends an audit-log row.
 */
import { eq } from 'drizzle-orm';
import { z } from 'zod';
import { ConflictError, InputError } from '../errors.ts';
import type { Registry } from '../registry/open.ts';
import { appendAudit, isServerProcess, nowIso, writeTransaction } from '../registry/records.ts';
import { checkActor } from './actor.ts';

interface SettingDefinition<T> {
  schema: z.ZodType<T>;
  default: T;
  meaning: string;
  /** Parse the text a person types on the command line. */
  parseText(text: string): unknown;
}

const origin = z
  .string()
  .regex(/^https?:\/\/[A-Za-z0-9.-]+(:\d{1,5})?$/, 'an origin is scheme://host[:port], no path, e.g. https://design.example.org');

/** "on"/"off" (also true/false, yes/no) as a person types them; anything else is left for the schema to refuse. */
function onOff(text: string): unknown {
  const t = text.trim().toLowerCase();
  if (['on', 'true', 'yes'].includes(t)) return true;
  if (['off', 'false', 'no'].includes(t)) return false;
  return text;
}

/** Longest lifetime a token may be given: ten years (a token meant to live for ever says "never"). */
const MAX_LIFETIME_HOURS = 3650 * 24;
export const LIFETIME_FORM = 'a lifetime is a whole number of days or hours, e.g. 90d or 12h (at most 3650d), or "never"';

/** Hours in a token lifetime "90d" / "12h"; null for "never"; undefined when the text is not a lifetime. */
export function lifetimeHours(text: string): number | null | undefined {
  if (text === 'never') return null;
  const m = /^([1-9][0-9]{0,6})([dh])$/.exec(text);
  if (!m) return undefined;
  const hours = Number(m[1]) * (m[2] === 'd' ? 24 : 1);
  return hours <= MAX_LIFETIME_HOURS ? hours : undefined;
}

export const SETTINGS = {
  allow_self_approval: {
    schema: z.boolean({ error: 'say on or off' }),
    default: false,
    meaning: 'let the creator of a version approve it (a one-person lab); such approvals are recorded as self-approval',
    parseText: onOff,
  } satisfies SettingDefinition<boolean>,
  anonymous_reads: {
    schema: z.enum(['auto', 'on', 'off']),
    default: 'auto',
    meaning: 'reads without a token: "auto" allows them only when the server is bound to a loopback address',
    parseText: (t: string) => t,
  } satisfies SettingDefinition<'auto' | 'on' | 'off'>,
  cors_origins: {
    schema: z.array(origin).max(64),
    default: [] as string[],
    meaning: 'browser origins allowed to call the API (CORS allow-list); empty allows none',
    parseText: (t: string) =>
      t
        .split(',')
        .map((s) => s.trim())
        .filter(Boolean),
  } satisfies SettingDefinition<string[]>,
  max_body_bytes: {
    schema: z
      .number()
      .int()
      .min(1024)
      .max(256 * 1024 * 1024),
    default: 8 * 1024 * 1024,
    meaning: 'largest request body accepted, in bytes (uploads beyond it get 413)',
    parseText: (t: string) => Number(t),
  } satisfies SettingDefinition<number>,
  max_nk_points: {
    schema: z.number().int().min(1).max(1_000_000),
    default: 10_000,
    meaning: 'most wavelengths one n,k request may evaluate',
    parseText: (t: string) => Number(t),
  } satisfies SettingDefinition<number>,
  max_stack_work: {
    schema: z.number().int().min(1).max(1_000_000_000),
    default: 2_000_000,
    meaning: 'most work one POST /stack may ask for: layers × wavelengths × angles × sweep steps (each at least 1)',
    parseText: (t: string) => Number(t),
  } satisfies SettingDefinition<number>,
  token_lifetime: {
    schema: z.string().refine((t) => lifetimeHours(t) !== undefined, LIFETIME_FORM),
    default: '90d',
    meaning: 'how long a new bearer token works when its creator names no lifetime: days or hours (90d, 12h, at most 3650d), or never',
    parseText: (t: string) => t.trim(),
  } satisfies SettingDefinition<string>,
  writes: {
    schema: z.enum(['any', 'server-only']),
    default: 'any',
    meaning: 'who writes the registry file: "any" process, or "server-only" (only the server, where each person acts through their own token)',
    parseText: (t: string) => t,
  } satisfies SettingDefinition<'any' | 'server-only'>,
};

export type SettingKey = keyof typeof SETTINGS;
export type Settings = { [K in SettingKey]: z.infer<(typeof SETTINGS)[K]['schema']> };
export const SETTING_KEYS = Object.keys(SETTINGS) as SettingKey[];

export function parseSettingKey(key: string): SettingKey {
  if (key in SETTINGS) return key as SettingKey;
  throw new InputError('setting-unknown', `unknown setting "${key}": known settings are ${SETTING_KEYS.join(', ')}`, {});
}

/** `writes` decides who may write at all, so it is changed only through the server, where a token says who is asking. */
function refuseDirectWritesChange(registry: Registry, key: SettingKey): void {
  if (key === 'writes' && !isServerProcess(registry))
    throw new ConflictError('the setting "writes" is changed only through the server, by an admin', 'writes-setting-server');
}

function validate(key: SettingKey, value: unknown): unknown {
  const result = SETTINGS[key].schema.safeParse(value);
  if (!result.success) {
    const why = result.error.issues.map((i) => i.message).join('; ');
    throw new InputError('setting-value', `bad value for setting ${key}: ${why}`, {});
  }
  return result.data;
}

/**
 * Whether reads without a token (or a signed-in session) are allowed: the `anonymous_reads` setting, where
 * "auto" means only on a server bound to a loopback address. Shared by the API, the web pages and `serve`.
 */
export function anonymousReadsAllowed(settings: Pick<Settings, 'anonymous_reads'>, loopback: boolean): boolean {
  return settings.anonymous_reads === 'on' || (settings.anonymous_reads === 'auto' && loopback);
}

/** All settings, stored values over defaults. */
export async function readSettings(registry: Registry): Promise<Settings> {
  const { registrySettings } = registry.tables;
  const settings = Object.fromEntries(SETTING_KEYS.map((k) => [k, SETTINGS[k].default])) as Record<string, unknown>;
  for (const row of await registry.db.select().from(registrySettings)) if (row.key in SETTINGS) settings[row.key] = JSON.parse(row.value);
  return settings as Settings;
}

/** Store a validated value (already typed, as the API receives it). */
export async function writeSetting(registry: Registry, key: string, value: unknown, actor: string): Promise<Settings> {
  const { registrySettings } = registry.tables;
  const updatedBy = checkActor(actor);
  const k = parseSettingKey(key);
  const json = JSON.stringify(validate(k, value));
  refuseDirectWritesChange(registry, k);
  const updatedAt = nowIso();
  await writeTransaction(registry, async () => {
    await registry.db
      .insert(registrySettings)
      .values({ key: k, value: json, updatedAt, updatedBy })
      .onConflictDoUpdate({ target: registrySettings.key, set: { value: json, updatedAt, updatedBy } });
    await appendAudit(registry, { actor: updatedBy, action: 'setting.set', detail: { key: k, value: JSON.parse(json) } });
  });
  return readSettings(registry);
}

/** Store a value typed on the command line ("on", "https://a,https://b", "1048576"). */
export async function writeSettingText(registry: Registry, key: string, text: string, updatedBy: string): Promise<Settings> {
  const k = parseSettingKey(key);
  return writeSetting(registry, k, SETTINGS[k].parseText(text), updatedBy);
}

/** Forget a stored value so the default applies again. */
export async function resetSetting(registry: Registry, key: string, actor: string): Promise<Settings> {
  const { registrySettings } = registry.tables;
  const updatedBy = checkActor(actor);
  const k = parseSettingKey(key);
  refuseDirectWritesChange(registry, k);
  await writeTransaction(registry, async () => {
    await registry.db.delete(registrySettings).where(eq(registrySettings.key, k));
    await appendAudit(registry, { actor: updatedBy, action: 'setting.reset', detail: { key: k } });
  });
  return readSettings(registry);
}
