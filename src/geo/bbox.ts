/** [west, south, east, north] in degrees; west > east when the box straddles the antimeridian. */
export function lonLatBox(lonLat: Float64Array): [number, number, number, number] {
  const n = lonLat.length / 2;
  let south = Infinity;
  let north = -Infinity;
  let west = Infinity;
  let east = -Infinity;
  let westShifted = Infinity;
  let eastShifted = -Infinity;
  for (let i = 0; i < n; i++) {
    const lon = lonLat[2 * i]!;
    const lat = lonLat[2 * i + 1]!;
    if (lat < south) south = lat;
    if (lat > north) north = lat;
    if (lon < west) west = lon;
    if (lon > east) east = lon;
    const shifted = lon < 0 ? lon + 360 : lon;
    if (shifted < westShifted) westShifted = shifted;
    if (shifted > eastShifted) eastShifted = shifted;
  }
  if (eastShifted - westShifted < east - west) {
    return [westShifted > 180 ? westShifted - 360 : westShifted, south, eastShifted > 180 ? eastShifted - 360 : eastShifted, north];
  }
  return [west, south, east, north];
}

