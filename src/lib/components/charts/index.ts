// Small SVG charts for records and other screens: a log–log line plot, a spectrum stem chart and a
// drawing of one element with a nodal displacement applied.
export { default as LogLogPlot, type LogLogSeries } from './log-log-plot.svelte';
export { default as SpectrumChart } from './spectrum-chart.svelte';
export { default as DeformedMesh } from './deformed-mesh.svelte';
export * from './log-axis';
export * from './spectrum';
export * from './mesh-drawing';
export * from './markers';
export * from './number-format';
