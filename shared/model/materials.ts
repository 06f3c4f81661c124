/**
 * Effective-mass presets m* / m_e for the conduction band, the only material
 * property the lattice model uses (t = (ħ²/2m_e)/(m* / m_e)/a²).
 */

interface MaterialPreset {
  /** Stable id used in model documents. */
  id: string;
  /** Human-readable name for the editor. */
  label: string;
  /** Conduction-band effective mass ratio m* / m_e. */
  effectiveMass: number;
  /** Where the value comes from. */
  source: string;
}

export const MATERIAL_PRESETS: readonly MaterialPreset[] = [
  {
    id: 'gaas',
    label: 'GaAs (2DEG)',
    // The value used throughout the GaAs 2DEG literature; from memory (also the
    // figure the brief and the contract's 1.728 meV/T cyclotron check assume).
    effectiveMass: 0.067,
    source: 'from memory: standard GaAs conduction-band mass 0.067 m_e',
  },
  {
    id: 'inas',
    label: 'InAs',
    // From memory: band-edge mass 0.023 m_e as tabulated in Sze, Physics of
    // Semiconductor Devices (appendix table of semiconductor properties).
    effectiveMass: 0.023,
    source: 'from memory: Sze, Physics of Semiconductor Devices, appendix table (0.023 m_e)',
  },
  {
    id: 'in053ga047as',
    label: 'In0.53Ga0.47As (lattice-matched to InP)',
    // From memory: about 0.041 m_e is the commonly quoted band-edge value.
    effectiveMass: 0.041,
    source: 'from memory: commonly quoted 0.041 m_e',
  },
  {
    id: 'si100',
    label: 'Si(100) inversion layer (transverse mass)',
    // The in-plane mass of the two lowest valleys of a (100) surface is the
    // transverse mass m_t; from memory 0.19 m_e (Sze, appendix table).
    effectiveMass: 0.19,
    source: 'from memory: Si transverse mass m_t = 0.19 m_e (Sze, appendix table)',
  },
  {
    id: 'free-electron',
    label: 'Free electron (m* = m_e)',
    effectiveMass: 1.0,
    source: 'definition',
  },
];

/** The preset with this id, or undefined. */
export function findMaterial(id: string): MaterialPreset | undefined {
  return MATERIAL_PRESETS.find((m) => m.id === id);
}

/** A honeycomb-lattice material: the carbon–carbon distance and the hopping, with where they come from. */
interface HoneycombPreset {
  id: string;
  label: string;
  /** Carbon–carbon distance a_CC (nm). */
  acc: number;
  /** The hopping t (eV) the editor fills in. */
  hopping: number;
  /** The range of t quoted in the literature (eV). */
  hoppingRange: [number, number];
  source: string;
}

const HONEYCOMB_PRESETS: readonly HoneycombPreset[] = [
  {
    id: 'graphene',
    label: 'Graphene (nearest-neighbour tight binding)',
    acc: 0.142,
    hopping: 2.7,
    hoppingRange: [2.7, 2.8],
    // From memory: a ≈ 1.42 Å and t ≈ 2.8 eV in the review's §II.A; 2.7 eV is the other
    // value commonly used (e.g. fits to ab initio bands, Reich et al., PRB 66, 035412 (2002)).
    source: 'Castro Neto, Guinea, Peres, Novoselov & Geim, Rev. Mod. Phys. 81, 109 (2009), §II.A: a_CC ≈ 0.142 nm, t ≈ 2.7–2.8 eV (from memory)',
  },
];

/**
 * The honeycomb preset with this id, or undefined.
 * @public for the model editor's lattice choice (issue 15), which is not built yet.
 */
export function findHoneycombPreset(id: string): HoneycombPreset | undefined {
  return HONEYCOMB_PRESETS.find((m) => m.id === id);
}
