/**
 * An online tile URL the map can use: https, with {z}, {x} and {y} in it (the slippy-map tile
 * scheme Leaflet's tile layer fills in). No Node imports: the window checks it too.
 */
export function isTileUrl(url: string): boolean {
  return /^https:\/\/.+\{z\}.+\{x\}.+\{y\}/.test(url);
}
