/** Physical constants and unit factors shared by the calculations (SI); a port of constants.py. */
export const G = 9.80665; // standard gravity, m/s² (CGPM 1901; ISO 80000-3)
export const ATMOSPHERE_KPA = 101.325; // standard atmosphere, kPa
export const AIR_DENSITY_KGM3 = 1.225; // ISA sea level, 15 °C
export const WATER_DENSITY_20C_KGM3 = 998.2;
export const PA_PER_KPA = 1000;
export const N_PER_KN = 1000;
export const M_PER_MM = 0.001;
export const M3_PER_L = 0.001;
export const S_PER_MIN = 60;
export const MBAR_PER_KPA = 10;
export const CAUTION =
  "This calculation supports, and does not replace, the equipment maker's limits, " +
  "the local code and a licensed engineer's design.";
