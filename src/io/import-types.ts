/** Options, results and column roles of tabulated n,k import (src/io/parse-table.ts). */
import type { SpectralUnit } from '../optics/units.ts';
import type { NkTable } from '../table.ts';

/** What a column of an optical-constants table holds. */
export type ColumnRole = 'x' | 'n' | 'k' | 'eps1' | 'eps2' | 'sigma_n' | 'sigma_k' | 'sigma_eps1' | 'sigma_eps2' | 'ignore';

export interface ImportOptions {
  /** File name used in messages ("-" or "<stdin>" for standard input). */
  file?: string;
  /** Unit of the x column; overrides the unit in the header. */
  xUnit?: SpectralUnit;
  /**
   * Names of the columns in order, overriding the header (required for headerless files), e.g.
   * ["wavelength", "n", "k"], ["energy", "eps1", "eps2"], ["wavelength (um)", "n", "k", "sigma_n"]; "-" skips one.
   */
  columns?: string[];
  /** Field separator: ",", ";", "\t", a single other character, or "whitespace" (runs of spaces/tabs). */
  delimiter?: string;
  /** Numbers use a decimal comma (only allowed when the separator is not a comma). Detected when absent. */
  decimalComma?: boolean;
  /** Negative k down to −kTolerance is noise and set to 0 with a warning; below it the file is refused. */
  kTolerance?: number;
  /** Refuse inputs larger than this many bytes. */
  maxBytes?: number;
  /** 1-based physical line of the header, when detection is not wanted; the lines above it are the preamble. */
  headerLine?: number;
  /** Accept x values outside the plausible range (PLAUSIBLE_RANGE_NM), for genuine EUV or THz data. */
  allowAnyRange?: boolean;
}

/** How the input was read: what a person needs to check that detection got it right. */
export interface DetectedFormat {
  encoding: 'utf-8' | 'utf-16le' | 'utf-16be' | 'windows-1252';
  bom: boolean;
  lineEnding: 'LF' | 'CRLF' | 'CR';
  /** "," ";" "\t" "whitespace" or the explicit single character. */
  delimiter: string;
  decimalComma: boolean;
  /** True when a header line named the columns. */
  header: boolean;
  /** 1-based line of the header, when there is one. */
  headerLine?: number;
  /**
   * Lines above the header that are neither blank nor `#` comments (sample, operator, angles … as the
   * instrument wrote them), trimmed, in file order; empty when the header is the first such line.
   */
  preamble: string[];
  /** The units row under the header, one entry per cell ("nm", "-", "" …), when there is one. */
  unitsRow?: string[];
  /** Column names as in the header (or as given by the columns option). */
  columns: string[];
  /** Role of each column, in file order. */
  roles: ColumnRole[];
  /** Unit of the x column in the file. */
  xUnit: SpectralUnit;
  /** "nk" when the file holds n,k; "eps" when it holds ε1, ε2 (converted to n,k). */
  quantity: 'nk' | 'eps';
  /** False when the file has no k (nor ε2) column: k is then stored as 0 but was not measured. */
  hasK: boolean;
  hasSigma: boolean;
  /** 1-based line of the first and last data row. */
  dataLines: [number, number];
  /** Rows read from the file before duplicate merging. */
  rows: number;
}

export interface ImportResult {
  table: NkTable;
  detected: DetectedFormat;
  warnings: string[];
}

/**
 * The x range an optical-constants table can plausibly cover, in nm: 10 nm (extreme UV) to 1 mm (far
 * infrared / THz edge). Values outside it are almost always a wrong unit (common practice; a lab with
 * genuine EUV or THz data says so with the allow_any_range option).
 */
export const PLAUSIBLE_RANGE_NM: [number, number] = [10, 1e6];

/** Default tolerance for negative k: noise in a transparent region rarely exceeds 1e-3 (common practice). */
export const DEFAULT_K_TOLERANCE = 1e-3;
/** Default size limit: 20 MiB, far above any real n,k table (a 1 nm grid over 200–20000 nm is ~1 MB). */
export const DEFAULT_MAX_BYTES = 20 * 1024 * 1024;
/** A gap is "large" when it exceeds this many times the median spacing, in the file's own x unit. */
export const LARGE_GAP_FACTOR = 5;
