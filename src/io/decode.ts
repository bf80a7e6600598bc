/**
 * Bytes to text for delimited tables: size limit, binary refusal, UTF-8 BOM, UTF-16 with a BOM (what
 * spreadsheet programs write as "Unicode text"), and a windows-1252 fallback for exports from older
 * Windows software (where µ and Å are single bytes).
 */
import { InputError } from '../errors.ts';

export interface DecodedText {
  text: string;
  encoding: 'utf-8' | 'utf-16le' | 'utf-16be' | 'windows-1252';
  bom: boolean;
}

/** Share of control characters (other than tab, CR, LF, FF) above which text is taken for binary. */
const CONTROL_SHARE_LIMIT = 0.05;

export function byteLength(input: string | Uint8Array): number {
  return typeof input === 'string' ? Buffer.byteLength(input, 'utf8') : input.byteLength;
}

/** Refuse an input larger than maxBytes, naming the limit and how to raise it. */
export function checkSize(bytes: number, maxBytes: number, file: string | undefined): void {
  if (bytes > maxBytes) {
    throw new InputError(
      'file-too-large',
      `input is ${formatMiB(bytes)}, over the size limit of ${formatMiB(maxBytes)}; raise the limit (in MiB) if the file is really a table`,
      { file },
      { remedies: [{ option: 'max_size', value: String(Math.ceil(bytes / 1024 / 1024)) }] },
    );
  }
}

export function formatMiB(bytes: number): string {
  return `${(bytes / 1024 / 1024).toFixed(bytes < 1024 * 1024 ? 3 : 1)} MiB`;
}

export function decodeText(input: string | Uint8Array, file: string | undefined, maxBytes: number): DecodedText {
  checkSize(byteLength(input), maxBytes, file);
  let text: string;
  let encoding: DecodedText['encoding'] = 'utf-8';
  if (typeof input === 'string') {
    text = input;
  } else if (utf16Bom(input) !== undefined) {
    encoding = utf16Bom(input)!;
    try {
      text = new TextDecoder(encoding, { fatal: true, ignoreBOM: true }).decode(input);
    } catch {
      refuseBinary(file);
    }
  } else {
    if (input.includes(0)) refuseBinary(file);
    try {
      text = new TextDecoder('utf-8', { fatal: true, ignoreBOM: true }).decode(input);
    } catch {
      text = new TextDecoder('windows-1252').decode(input);
      encoding = 'windows-1252';
    }
  }
  const bom = text.charCodeAt(0) === 0xfeff;
  if (bom) text = text.slice(1);
  if (looksBinary(text)) refuseBinary(file);
  return { text, encoding, bom };
}

/** UTF-16 announced by its byte-order mark (FF FE little-endian, FE FF big-endian); without one, NULs mean binary. */
function utf16Bom(bytes: Uint8Array): 'utf-16le' | 'utf-16be' | undefined {
  if (bytes.length < 2) return undefined;
  if (bytes[0] === 0xff && bytes[1] === 0xfe) return 'utf-16le';
  if (bytes[0] === 0xfe && bytes[1] === 0xff) return 'utf-16be';
  return undefined;
}

function looksBinary(text: string): boolean {
  const sample = text.slice(0, 8192);
  if (sample.includes('\u0000')) return true;
  let control = 0;
  for (let i = 0; i < sample.length; i++) {
    const c = sample.charCodeAt(i);
    if ((c < 32 && c !== 9 && c !== 10 && c !== 13 && c !== 12) || c === 0xfffd) control++;
  }
  return sample.length > 0 && control / sample.length > CONTROL_SHARE_LIMIT;
}

function refuseBinary(file: string | undefined): never {
  throw new InputError('binary-file', 'this is a binary file, not a delimited text table', { file });
}
