/**
 * Density and dynamic viscosity of liquid water at 1 atm, 0-60 °C; a port of water_properties.py
 * (Kell 1975 density; the server's own quartic fit of ln μ to IAPWS 2008).
 */
const MIN_TEMP_C = 0;
const MAX_TEMP_C = 60;
const KELL_NUMERATOR = [999.83952, 16.945176, -7.9870401e-3, -46.170461e-6, 105.56302e-9, -280.54253e-12];
const KELL_DENOMINATOR_T = 16.87985e-3;
const LN_VISCOSITY_MPAS = [0.582731, -0.0345766, 0.000328173, -2.89592e-6, 1.33337e-8];

function checkRange(tempC: number): void {
  if (!(MIN_TEMP_C <= tempC && tempC <= MAX_TEMP_C)) {
    throw new RangeError(`water property model covers ${MIN_TEMP_C}-${MAX_TEMP_C} °C, not ${tempC}`);
  }
}

function poly(coefficients: number[], x: number): number {
  let total = 0;
  for (let i = coefficients.length - 1; i >= 0; i -= 1) total = total * x + coefficients[i]!;
  return total;
}

export function densityKgm3(tempC: number): number {
  checkRange(tempC);
  return poly(KELL_NUMERATOR, tempC) / (1 + KELL_DENOMINATOR_T * tempC);
}

export function viscosityPas(tempC: number): number {
  checkRange(tempC);
  return Math.exp(poly(LN_VISCOSITY_MPAS, tempC)) * 1e-3;
}
