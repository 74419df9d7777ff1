/**
 * The overlay's colours: Okabe & Ito's (2002) colour-universal palette and
 * nothing else, so the page stays legible with the common colour-vision
 * deficiencies. Meaning never rests on colour alone; each role below is
 * also carried by a shape, a pattern or words.
 *
 * @example
 *   ctx.strokeStyle = PALETTE.sky;
 */
export const PALETTE = {
  black: '#000000',
  orange: '#E69F00',
  sky: '#56B4E9',
  green: '#009E73',
  yellow: '#F0E442',
  blue: '#0072B2',
  vermillion: '#D55E00',
  purple: '#CC79A7',
} as const;

export type Colour = keyof typeof PALETTE;

/** A palette colour at partial opacity, for tints and grid lines. */
export const tint = (colour: Colour, alpha: number): string =>
  PALETTE[colour] + Math.round(Math.min(1, Math.max(0, alpha)) * 255).toString(16).padStart(2, '0');
