// Hazards without zod: the header's search box (on every page) needs the list, not the schemas.

export const HAZARDS = ['mains', 'stored_energy', 'heat', 'none'] as const
export type Hazard = (typeof HAZARDS)[number]

/** Hazards that put the caution panel on the reader page. */
export const CAUTION_HAZARDS: readonly Hazard[] = ['mains', 'stored_energy']
