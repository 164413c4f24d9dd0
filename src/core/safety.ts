/**
 * The safety cautions glowprint shows wherever they apply: command help, README, web app and reports. One wording,
 * kept here. They are reminders, not a safety programme: local laser-safety rules and electrical codes govern.
 */
export const LASER_CAUTION =
  'Laser safety: never look into the beam or its specular reflections — a class 3B beam injures the eye faster than a blink. ' +
  'Polarizers, gratings, lenses and glass plates make specular reflections: block stray beams and keep them below eye level. ' +
  'Wear eyewear rated for the wavelength for class 3B and above. A matte screen or card gives diffuse light; a grating or polarizer surface does not. ' +
  'Local laser-safety rules (IEC 60825-1, ANSI Z136.1) and your laser safety officer take precedence.';

export const HIGH_VOLTAGE_CAUTION =
  'High voltage: discharge-tube and neon-sign supplies run at kilovolts and can deliver a dangerous shock. ' +
  'Never touch a tube, its clips or leads while the supply is on; switch off and let it discharge before changing tubes. ' +
  'Spectrum tubes get hot. Follow local electrical codes and licensed practice for sign work.';

export const UV_CAUTION =
  'Ultraviolet: mercury and other discharge lamps emit UV (including the 254 nm and 365 nm mercury lines) that harms eyes and skin; ' +
  'do not look at an unshielded lamp for long, and use UV-blocking glasses or a glass or polycarbonate shield.';

/** All cautions, for reports and the README. */
export const ALL_CAUTIONS = [LASER_CAUTION, HIGH_VOLTAGE_CAUTION, UV_CAUTION] as const;
