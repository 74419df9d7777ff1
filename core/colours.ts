/**
 * The one colour code, on the overlay and on every page: Okabe & Ito's
 * (2002) colour-universal palette, each colour with one meaning. Colour
 * never carries a meaning alone: beside each role is the shape, pattern or
 * word that carries it too.
 *
 * @example
 *   ctx.strokeStyle = COLOUR_CODE.warning;   // '#D55E00', with a triangle and the word "warning"
 */
export const OKABE_ITO = {
  black: '#000000',
  orange: '#E69F00',
  sky: '#56B4E9',
  green: '#009E73',
  yellow: '#F0E442',
  blue: '#0072B2',
  vermillion: '#D55E00',
  purple: '#CC79A7',
} as const;

export const COLOUR_CODE = {
  /** The live score as the performer saw it: the overlay's meter and timeline, the review's dashed step line. */
  live: OKABE_ITO.sky,
  /** A re-scored window's score on a page: a solid line with round points. */
  rescored: OKABE_ITO.blue,
  /** A warning, or a score at or over the threshold: triangles, diamonds, hatching or stripes, and the word. */
  warning: OKABE_ITO.vermillion,
  /** The warning threshold: a dashed line or a notch, labelled. */
  threshold: OKABE_ITO.orange,
  /** Notes a match lands on: a solid outline (filled on the pages). */
  matched: OKABE_ITO.yellow,
  /** Notes it does not: a dashed outline. */
  unmatched: OKABE_ITO.purple,
  /** The human baseline: a labelled band. */
  baseline: OKABE_ITO.green,
  /** Text, axes and everything without a meaning of its own (greys are it at lower opacity). */
  ink: OKABE_ITO.black,
} as const;

export type Role = keyof typeof COLOUR_CODE;
