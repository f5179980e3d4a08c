// Side-effect imports of style sheets (esbuild bundles them into main.css). No import/export here:
// a wildcard module declaration only works in a non-module declaration file.
declare module '*.css';
