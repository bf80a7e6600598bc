/**
 * The normalized optical-constants table every part of nkledger exchanges:
 * rows sorted by ascending wavelength in nm, n and k per row, optional 1σ uncertainties.
 */
export interface NkTable {
  /** Ascending, strictly increasing wavelengths in nm. */
  wavelengthNm: number[];
  n: number[];
  k: number[];
  /** 1σ uncertainty of n per row, when the source gave one. */
  sigmaN?: number[];
  /** 1σ uncertainty of k per row, when the source gave one. */
  sigmaK?: number[];
  /**
   * 1σ of ε1 and ε2 per row, when the source gave ε with its own sigma columns (sigmaN/sigmaK are then their
   * linear propagation). A fit of ε1, ε2 uses these directly: converting σε → σn,σk → σε distorts them.
   */
  sigmaEps1?: number[];
  sigmaEps2?: number[];
}

/** [min, max] wavelength of a table in nm. */
export function tableRangeNm(table: NkTable): [number, number] {
  return [table.wavelengthNm[0], table.wavelengthNm[table.wavelengthNm.length - 1]];
}
