// @mapbox/geojson-rewind ships no types; this is the one function it exports.
declare module '@mapbox/geojson-rewind' {
  import type { GeoJSON } from 'geojson';
  /** Rewinds rings; outer = false gives RFC 7946 (exterior counter-clockwise). */
  export default function rewind<T extends GeoJSON>(geojson: T, outer?: boolean): T;
}
