// Marker shapes shared by the charts, so a series or a class of point is told apart by shape, not colour alone.
import { symbol, symbolCircle, symbolDiamond, symbolSquare, symbolTriangle, type SymbolType } from 'd3-shape';

export type MarkerShape = 'circle' | 'square' | 'diamond' | 'triangle' | 'triangle-down';

const TYPES: Record<MarkerShape, SymbolType> = {
  circle: symbolCircle,
  square: symbolSquare,
  diamond: symbolDiamond,
  triangle: symbolTriangle,
  'triangle-down': symbolTriangle
};

/** SVG path of a marker centred at the origin with the given area in px². */
export function markerPath(shape: MarkerShape, area = 48): string {
  return symbol(TYPES[shape], area)() ?? '';
}

/** The transform that places a marker at (x, y); the downward triangle is the upward one turned over. */
export function markerTransform(shape: MarkerShape, x: number, y: number): string {
  return shape === 'triangle-down' ? `translate(${x},${y}) rotate(180)` : `translate(${x},${y})`;
}
