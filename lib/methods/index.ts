export type { MethodFormula, MethodSection, MethodSource, SourceStrength } from './types';
export { METHOD_SECTIONS, methodSection } from './sections';
export { CAUTIONS, CAUTION_SHORT } from './cautions';
export { methodBlock, formatMethodBlock, type MethodBlockInput, type MethodBlockLine } from './method-block';
export { methodsAsText } from './text';
