export {
  CANONICAL_UNIT,
  DISPLAY_UNIT,
  KINDS,
  KIND_EXAMPLE,
  KIND_NOUN,
  UNITS,
  expectation,
  type Kind,
  type UnitDef,
  type UnitStyle,
} from './units';
export {
  describeUnknownUnit,
  detectKind,
  parseQuantity,
  parseTolerance,
  type ParseResult,
  type Quantity,
  type RangeText,
  type Written,
} from './parse';
export { formatFigure, formatLike, formatQuantity, roundTo, shiftDecimal } from './format';
