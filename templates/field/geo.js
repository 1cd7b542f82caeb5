// Distance and initial bearing on the WGS 84 ellipsoid (Vincenty's inverse
// formula, T. Vincenty, Survey Review 23(176), 1975), which agrees with
// Karney's algorithm used by the field kit (sync/src/field/geo_calc.rs) to
// well under a millimetre except for nearly antipodal points, which a walk
// to a stop never is. When the iteration does not converge the spherical
// (haversine) answer is given instead.

const A = 6378137.0;
const F = 1 / 298.257223563;
const B = A * (1 - F);
const rad = (d) => (d * Math.PI) / 180;
const deg = (r) => (r * 180) / Math.PI;

function spherical(lat1, lon1, lat2, lon2) {
  const R = 6371008.8;
  const p1 = rad(lat1); const p2 = rad(lat2); const dl = rad(lon2 - lon1);
  const a = Math.sin((p2 - p1) / 2) ** 2 + Math.cos(p1) * Math.cos(p2) * Math.sin(dl / 2) ** 2;
  const s = 2 * R * Math.asin(Math.min(1, Math.sqrt(a)));
  const y = Math.sin(dl) * Math.cos(p2);
  const x = Math.cos(p1) * Math.sin(p2) - Math.sin(p1) * Math.cos(p2) * Math.cos(dl);
  return { distance: s, bearing: (deg(Math.atan2(y, x)) + 360) % 360 };
}

/** Metres and degrees [0, 360) from point 1 to point 2. */
export function distanceBearing(lat1, lon1, lat2, lon2) {
  if (lat1 === lat2 && lon1 === lon2) return { distance: 0, bearing: 0 };
  const L = rad(lon2 - lon1);
  const U1 = Math.atan((1 - F) * Math.tan(rad(lat1)));
  const U2 = Math.atan((1 - F) * Math.tan(rad(lat2)));
  const sinU1 = Math.sin(U1); const cosU1 = Math.cos(U1);
  const sinU2 = Math.sin(U2); const cosU2 = Math.cos(U2);
  let lambda = L;
  let sinSigma; let cosSigma; let sigma; let cos2Alpha; let cos2SigmaM; let sinLambda; let cosLambda;
  for (let i = 0; i < 200; i += 1) {
    sinLambda = Math.sin(lambda); cosLambda = Math.cos(lambda);
    sinSigma = Math.sqrt((cosU2 * sinLambda) ** 2 + (cosU1 * sinU2 - sinU1 * cosU2 * cosLambda) ** 2);
    if (sinSigma === 0) return { distance: 0, bearing: 0 };
    cosSigma = sinU1 * sinU2 + cosU1 * cosU2 * cosLambda;
    sigma = Math.atan2(sinSigma, cosSigma);
    const sinAlpha = (cosU1 * cosU2 * sinLambda) / sinSigma;
    cos2Alpha = 1 - sinAlpha * sinAlpha;
    cos2SigmaM = cos2Alpha !== 0 ? cosSigma - (2 * sinU1 * sinU2) / cos2Alpha : 0;
    const C = (F / 16) * cos2Alpha * (4 + F * (4 - 3 * cos2Alpha));
    const prev = lambda;
    lambda = L + (1 - C) * F * sinAlpha * (sigma + C * sinSigma * (cos2SigmaM + C * cosSigma * (-1 + 2 * cos2SigmaM ** 2)));
    if (Math.abs(lambda - prev) < 1e-12) {
      const u2 = (cos2Alpha * (A * A - B * B)) / (B * B);
      const bigA = 1 + (u2 / 16384) * (4096 + u2 * (-768 + u2 * (320 - 175 * u2)));
      const bigB = (u2 / 1024) * (256 + u2 * (-128 + u2 * (74 - 47 * u2)));
      const dSigma = bigB * sinSigma * (cos2SigmaM + (bigB / 4) * (cosSigma * (-1 + 2 * cos2SigmaM ** 2)
        - (bigB / 6) * cos2SigmaM * (-3 + 4 * sinSigma ** 2) * (-3 + 4 * cos2SigmaM ** 2)));
      const s = B * bigA * (sigma - dSigma);
      const az = Math.atan2(cosU2 * sinLambda, cosU1 * sinU2 - sinU1 * cosU2 * cosLambda);
      return { distance: s, bearing: (deg(az) + 360) % 360 };
    }
  }
  return spherical(lat1, lon1, lat2, lon2);
}
