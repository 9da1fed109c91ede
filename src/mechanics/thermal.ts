/**
 * Temperature effects. The distinction that matters (and that monitoring systems get wrong):
 *
 * - Free thermal strain alpha dT is strain WITHOUT stress. Stress comes only from the mechanical
 *   strain: eps_mech = eps_total - alpha dT (normal components; shear unaffected).
 * - A restrained member heated by dT has eps_total = 0 yet eps_mech = -alpha dT, so it carries
 *   sigma = -E alpha dT (uniaxially). Reading total strain as stress-producing misses this stress;
 *   subtracting alpha dT from a reading that is already mechanical counts it twice.
 * - A bonded resistance gauge whose thermal output has been removed reads the mechanical strain of
 *   the surface, provided the thermal output was characterised on the same material. The project
 *   converts every element to TOTAL strain first (adding back the reference material's free
 *   expansion) and then subtracts the host's alpha dT once, for every gauge kind alike.
 * - A vibrating-wire gauge's wire expands too: its reading change is (alpha_host - alpha_wire) dT
 *   when the host is free, so total strain = reading + alpha_wire dT.
 *
 * Strains in microstrain, temperatures in degC, alpha in 1/degC.
 */

/**
 * Writes the free thermal strain vector (microstrain) into out: alpha_i dT on normal components,
 * zero on shear. `alpha` holds one coefficient per normal component present in `out`
 * (3 for a 6-vector: xx, yy, zz; 2 for a plane 3-vector: xx, yy). Returns out.
 */
export function thermalStrainVector(alpha: ArrayLike<number>, dT: number, out: Float64Array): Float64Array {
  out.fill(0);
  for (let i = 0; i < alpha.length; i++) out[i] = alpha[i] * dT * 1e6;
  return out;
}

/**
 * Thermal output polynomial of a gauge: apparent strain (microstrain) = sum c_k T^k, T in degC,
 * referenced to the zero-reading temperature so that it is zero there. Horner evaluation.
 */
export function thermalOutputMicro(coeffs: Float64Array, tempC: number, zeroTempC: number): number {
  return horner(coeffs, tempC) - horner(coeffs, zeroTempC);
}

export function horner(coeffs: Float64Array, x: number): number {
  let acc = 0;
  for (let k = coeffs.length - 1; k >= 0; k--) acc = acc * x + coeffs[k];
  return acc;
}

/**
 * Vibrating-wire reading in linear units ("digits", f^2 / 1000: the trade's unit, common practice)
 * from a frequency in Hz. The strain is then microPerDigit * calibrationMultiplier * (digits - zeroDigits).
 */
export function vibratingWireDigits(frequencyHz: number): number {
  return (frequencyHz * frequencyHz) / 1000;
}

/**
 * Microstrain per digit of a taut wire, from first principles. A wire of length L (m), density rho
 * (kg/m3) under stress sigma vibrates at f = (1 / 2L) sqrt(sigma / rho) (fundamental mode of a
 * string), so sigma = 4 L^2 rho f^2 and the wire's strain sigma / E = 4 L^2 rho f^2 / E. With
 * digits = f^2 / 1000, strain per digit = 4 L^2 rho 1000 / E; times 1e6 for microstrain.
 * Configuration-time helper (the configuration gives the constant itself).
 */
export function tautWireMicroPerDigit(lengthM: number, densityKgPerM3: number, modulusPa: number): number {
  return ((4 * lengthM * lengthM * densityKgPerM3 * 1000) / modulusPa) * 1e6;
}
