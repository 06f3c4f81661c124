// Answer types that more than one feature reads, kept here so that features do not
// import each other; they move to the HTTP contract (shared/api) with the other answers.

export interface CertificatePiece {
  emin: number;
  emax: number;
  polesFound: number;
  windingNumber: number;
  certified: boolean;
  nodes: number;
  note?: string;
}

export interface RunCertificate {
  pieces: CertificatePiece[];
  certified: boolean;
  summary: string;
}
