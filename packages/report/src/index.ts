// @tuningfork/report — SVG figures and self-contained HTML reports. Formats numbers, never computes them.

// Input types
export type {
  SpectrumInput, QcInput, ResponseCondition, ResponseInput, SortKey, TrialHeatmapInput, RasterInput,
  KernelCurve, KernelGroup, KernelInput, TuningCell, ClassCount, TuningInput, ReportColumn, ReportTable,
  SessionReportInput, BatchSession, BatchReportInput,
} from './types.js';

// Reports
export { sessionReport } from './html/session-report.js';
export type { SessionReportOptions } from './html/session-report.js';
export { batchReport, isRelativeLink } from './html/batch-report.js';
export { htmlTable } from './html/table.js';
export { REPORT_CSP, SORT_SCRIPT } from './html/page.js';

// Figures
export { qcFigure } from './figures/qc-figure.js';
export type { QcFigureOptions } from './figures/qc-figure.js';
export { periEventFigure } from './figures/peri-event-figure.js';
export type { PeriEventFigureOptions } from './figures/peri-event-figure.js';
export { trialHeatmapFigure } from './figures/trial-heatmap-figure.js';
export type { TrialHeatmapFigureOptions } from './figures/trial-heatmap-figure.js';
export { rasterFigure } from './figures/raster-figure.js';
export type { RasterFigureOptions } from './figures/raster-figure.js';
export { kernelFigure } from './figures/kernel-figure.js';
export type { KernelFigureOptions } from './figures/kernel-figure.js';
export { tuningMapFigure, CLASS_ORDER } from './figures/tuning-map-figure.js';
export type { TuningMapFigureOptions } from './figures/tuning-map-figure.js';
export { classCountsFigure } from './figures/class-counts-figure.js';
export type { ClassCountsFigureOptions } from './figures/class-counts-figure.js';

// Primitives: figure and panels
export { svgFigure, SvgFigure, makePanel, toSvgFile } from './primitives/figure.js';
export type { SvgFigureOptions, Frame, AxisSpec, Panel } from './primitives/figure.js';
// Primitives: scales and formatting
export { linearScale, logScale, niceStep, niceDomain, ticksAt, logTicks } from './primitives/scale.js';
export type { Scale, Tick, LinearScaleOptions, LogScaleOptions } from './primitives/scale.js';
export { formatTick, formatNumber } from './primitives/format.js';
export type { FormatNumberOptions } from './primitives/format.js';
export { escapeXml } from './primitives/escape.js';
// Primitives: marks
export { drawAxis, drawGrid, axisTitle } from './primitives/axes.js';
export type { AxisOptions } from './primitives/axes.js';
export { drawLine, drawBand, drawMarkers, drawRule, drawRunBars, drawBars } from './primitives/marks.js';
export type { LineStyle, BandStyle, MarkerStyle, Run } from './primitives/marks.js';
export { drawHeatmap, drawColorBar, colorLimits } from './primitives/heatmap.js';
export type { HeatmapOptions, ColorBarOptions, ColorLimits } from './primitives/heatmap.js';
export { drawLegend, measureLegend } from './primitives/legend.js';
export type { LegendItem, LegendOptions, LegendBlock } from './primitives/legend.js';
export { drawText, drawScaleBar, niceLength } from './primitives/annotate.js';
export type { TextOptions, ScaleBarArm } from './primitives/annotate.js';
export { markerPath, MARKER_SHAPES } from './primitives/marker.js';
export type { MarkerShape } from './primitives/marker.js';
export { decimateLine, decimateBand } from './primitives/decimate.js';
export type { DecimatedLine, LineX } from './primitives/decimate.js';
// Primitives: colour and images
export {
  PALETTE, CONDITION_COLORS, CLASS_STYLES, COLOR_MAPS, INK, classStyle, makeColorMap, colorAt, parseHex, toHex,
  rgbToOklab, oklabToRgb,
} from './primitives/color.js';
export type { ClassStyle, ColorMap } from './primitives/color.js';
export { encodePng, pngDataUrl, crc32 } from './primitives/png.js';
export type { PngImage } from './primitives/png.js';
