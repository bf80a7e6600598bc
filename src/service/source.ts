/**
 * Where tables come from: a file path, or "-" for standard input. The size limit is checked before
 * the content is read in full (stat for files, a running count for stdin).
 * Commands that also take a registry reference (`slug@3`) resolve SOURCE with table-source.ts `loadTableOrVersion`.
 */
import { existsSync } from 'node:fs';
import { readFile, stat } from 'node:fs/promises';
import { InputError } from '../errors.ts';
import { checkSize } from '../io/decode.ts';
import { DEFAULT_MAX_BYTES, type ImportOptions, type ImportResult } from '../io/import-types.ts';
import { parseRef } from '../registry/refs.ts';

export const STDIN_SOURCE = '-';

/** What "-" reads: the process's stdin, or another stream (the CLI run in-process). */
export type StdinStream = AsyncIterable<Buffer | string>;

/**
 * True when SOURCE names a registry version (`slug@N`, `slug@sha256:PREFIX`, a bare slug) rather than a file:
 * it is not "-", no file of that name exists, and it parses as a reference.
 */
export function isRegistrySource(source: string): boolean {
  if (source === STDIN_SOURCE || existsSync(source)) return false;
  try {
    parseRef(source);
    return true;
  } catch {
    return false;
  }
}

/** Read and import a table from a file path or "-" (stdin). Errors are InputErrors naming the source. */
export async function loadTable(source: string, options: ImportOptions = {}, stdin?: StdinStream): Promise<ImportResult> {
  const { bytes, file, maxBytes } = await readSource(source, options, stdin);
  // Loaded here, not at the top: a command given a registry ref (`nkledger eval slug@2`) never loads the
  // import pipeline and papaparse, a noticeable share of its start-up.
  const { parseNkTable } = await import('../io/parse-table.ts');
  return parseNkTable(bytes, { ...options, file, maxBytes });
}

/**
 * The raw bytes of a file path or "-" (`stdin`, passed in by the front door that has one), within the size limit,
 * and the name errors should give it. Without a `stdin`, "-" is refused: a server has no standard input to read.
 */
export async function readSource(
  source: string,
  options: ImportOptions = {},
  stdin?: StdinStream,
): Promise<{ bytes: Uint8Array; file: string; maxBytes: number }> {
  const maxBytes = options.maxBytes ?? DEFAULT_MAX_BYTES;
  const file = options.file ?? (source === STDIN_SOURCE ? '<stdin>' : source);
  if (source !== STDIN_SOURCE) return { bytes: await readLimitedFile(source, maxBytes, file), file, maxBytes };
  if (!stdin) throw new InputError('stdin-unavailable', '"-" (standard input) cannot be read here; name a file', { file });
  const bytes = await readStdin(stdin, maxBytes, file);
  return { bytes, file, maxBytes };
}

async function readLimitedFile(path: string, maxBytes: number, file: string): Promise<Uint8Array> {
  let size: number;
  try {
    const info = await stat(path);
    if (!info.isFile()) throw new InputError('not-a-file', `${path} is not a regular file`, { file });
    size = info.size;
  } catch (err) {
    if (err instanceof InputError) throw err;
    const code = (err as NodeJS.ErrnoException).code;
    if (code === 'ENOENT') throw new InputError('file-not-found', `no such file: ${path}`, { file });
    throw new InputError('unreadable-file', `cannot read ${path} (${code ?? String(err)})`, { file });
  }
  checkSize(size, maxBytes, file);
  return readFile(path);
}

/** Read stdin in chunks, refusing as soon as the running total passes maxBytes. */
async function readStdin(stdin: StdinStream, maxBytes: number, file: string): Promise<Uint8Array> {
  const chunks: Buffer[] = [];
  let total = 0;
  for await (const chunk of stdin) {
    const buf = typeof chunk === 'string' ? Buffer.from(chunk) : (chunk as Buffer);
    total += buf.byteLength;
    checkSize(total, maxBytes, file);
    chunks.push(buf);
  }
  return Buffer.concat(chunks);
}
