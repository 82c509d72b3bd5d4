/**
 * The page's stand-in for svgdom: the drawing primitives (src/render/svg.ts) ask svgdom for a
 * window to build SVG elements in; in the browser that is the page's own window. Bundled in
 * place of svgdom by vite.page.config.ts.
 */
export function createSVGWindow(): Window {
  return window;
}
