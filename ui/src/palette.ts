/**
 * The overlay's colours: Okabe & Ito's (2002) colour-universal palette and
 * nothing else, each with the one meaning core/colours.ts gives it, as on
 * the pages. Meaning never rests on colour alone; each role is also carried
 * by a shape, a pattern or words.
 *
 * @example
 *   ctx.strokeStyle = ROLE.live;
 */
import { COLOUR_CODE, OKABE_ITO } from '../../core/colours.js';

export const PALETTE = OKABE_ITO;

/** What each colour means (core/colours.ts): the overlay and the pages share it. */
export const ROLE = COLOUR_CODE;

export type Colour = keyof typeof PALETTE;

/** A palette colour at partial opacity, for tints and grid lines. */
export const tint = (colour: Colour, alpha: number): string =>
  PALETTE[colour] + Math.round(Math.min(1, Math.max(0, alpha)) * 255).toString(16).padStart(2, '0');
