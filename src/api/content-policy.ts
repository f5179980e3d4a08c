/**
 * The Content-Security-Policy of the map window, the same for the Electron window and for the
 * browser-mode server: the app's own scripts and styles only, no eval, no plugins, no frames,
 * calls only to its own origin. Map tiles may come from an online tile server the user sets
 * (https images only). Types and constants only (the renderer may import this file).
 */
export const APP_CSP = [
  "default-src 'none'",
  "script-src 'self'",
  "style-src 'self'",
  "img-src 'self' data: blob: https:",
  "font-src 'self'",
  "connect-src 'self'",
  "worker-src 'self' blob:",
  "object-src 'none'",
  "base-uri 'none'",
  "form-action 'none'",
  "frame-src 'none'",
  "frame-ancestors 'none'",
].join('; ');
