/**
 * Mean Earth radius R1 = (2a + b) / 3 of the GRS80/WGS84 ellipsoid, in kilometres.
 * Source: H. Moritz, "Geodetic Reference System 1980", Journal of Geodesy 74 (2000) 128-133,
 * the IUGG-adopted mean radius 6 371 008.8 m.
 */
export const EARTH_RADIUS_KM = 6371.0088;

/** Degrees to radians. */
export const RAD_PER_DEG = Math.PI / 180;

/** Radians to degrees. */
export const DEG_PER_RAD = 180 / Math.PI;
