/**
 * The report's colours: the palette of Okabe, M. and Ito, K. (2008), "Color
 * Universal Design (CUD): how to make figures and presentations that are
 * friendly to colorblind people" (J*Fly, University of Tokyo), eight colours
 * that stay distinct under the common forms of colour-vision deficiency
 * (protanopia, deuteranopia, tritanopia). The charts also vary shape or dash
 * where colour alone would carry a distinction.
 */
export const OKABE_ITO = {
  black: '#000000',
  orange: '#E69F00',
  skyBlue: '#56B4E9',
  bluishGreen: '#009E73',
  yellow: '#F0E442',
  blue: '#0072B2',
  vermillion: '#D55E00',
  reddishPurple: '#CC79A7',
} as const;

/** Category order for series: strong colours first, yellow (weak on white) last. */
export const CATEGORY_COLOURS: readonly string[] = [
  OKABE_ITO.blue,
  OKABE_ITO.orange,
  OKABE_ITO.bluishGreen,
  OKABE_ITO.vermillion,
  OKABE_ITO.reddishPurple,
  OKABE_ITO.skyBlue,
  OKABE_ITO.black,
  OKABE_ITO.yellow,
];
