/** svgdom ships no types; this is the one entry point ./svg.ts uses. */
declare module 'svgdom' {
  export function createSVGWindow(): Window;
}
