// nlopt-js ships no types; src/core/optimize/nlopt.ts describes the parts it uses.
declare module 'nlopt-js';
