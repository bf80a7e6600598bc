/**
 * The core never speaks in the command line's terms: below the front doors (api, cli, web, and the client that the
 * command line drives) no code writes a flag (`--fix`) or a command (`nkledger import …`) into a message. An option
 * is named with optionRef ("`fix`"), which each front door spells its own way, and next steps in a front door's
 * own terms come from that front door (src/cli/failure.ts NEXT_STEPS for the command line). Comments may name
 * flags; code may not.
 */
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { FIELD_WORDING, FLAG_WORDING, InputError, optionRef } from '../../src/errors.ts';
import { CLI_WORDING } from '../../src/cli/failure.ts';
import { PAGE_WORDING } from '../../src/web/layout.tsx';

const SRC = new URL('../../src/', import.meta.url).pathname;
const CORE = ['optics', 'models', 'plot', 'fit', 'kk', 'stack', 'io', 'registry', 'service'];
const FLAG = /(^|[\s(`'"])--[a-z]/;
const COMMAND = /`nkledger [a-z]/;

function sources(dir: string): string[] {
  return readdirSync(dir, { withFileTypes: true }).flatMap((e) =>
    e.isDirectory() ? sources(join(dir, e.name)) : e.name.endsWith('.ts') ? [join(dir, e.name)] : [],
  );
}

/** The text with its comments blanked (line numbers kept); `//` inside a string (a URL) is left alone. */
function code(text: string): string {
  return text.replace(/\/\*[\s\S]*?\*\//g, (m) => m.replace(/[^\n]/g, ' ')).replace(/(^|[^:'"`\\])\/\/.*$/gm, '$1');
}

describe('the core words no command line', () => {
  it('no flag or command in the code of the layers below the front doors', () => {
    const found: string[] = [];
    for (const layer of CORE) {
      for (const file of sources(join(SRC, layer))) {
        code(readFileSync(file, 'utf8'))
          .split('\n')
          .forEach((line, i) => {
            if (FLAG.test(line) || COMMAND.test(line)) found.push(`src/${file.slice(SRC.length)}:${i + 1}: ${line.trim()}`);
          });
      }
    }
    expect(found).toEqual([]);
  });

  it('each front door spells the options a refusal names, and the command line adds its next steps', () => {
    const refusal = new InputError(
      'terms-not-supported',
      `${optionRef('terms')} does not apply to "drude"`,
      {},
      {
        remedies: [{ option: 'input_unit', value: 'um' }],
      },
    );
    expect(refusal.describe(FLAG_WORDING)).toBe('--terms does not apply to "drude": use --input-unit um [terms-not-supported]');
    expect(refusal.describe(FIELD_WORDING)).toBe('`terms` does not apply to "drude": use input_unit=um [terms-not-supported]');
    expect(refusal.describe(PAGE_WORDING)).toBe(
      'the “terms” field does not apply to "drude": use the “input_unit” field set to um [terms-not-supported]',
    );
    const missing = new InputError('material-unknown', 'no material "tio2" in the registry', {}, { value: 'tio2' });
    expect(missing.describe(FIELD_WORDING)).toBe('no material "tio2" in the registry [material-unknown]');
    expect(missing.describe(CLI_WORDING)).toBe(
      'no material "tio2" in the registry (`nkledger list` lists them; `nkledger material add tio2 --name NAME` creates it) [material-unknown]',
    );
  });
});
