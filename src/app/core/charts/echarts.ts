/**
 * The parts of echarts the run, catalogue and fit charts use (the brush is the fit
 * workspace's range selection), loaded lazily through
 * provideEchartsCore so the initial bundle stays small (stack.md).
 */
import { LineChart, ScatterChart } from 'echarts/charts';
import { BrushComponent, DataZoomComponent, GridComponent, LegendComponent, MarkAreaComponent, MarkLineComponent, TooltipComponent } from 'echarts/components';
import * as echarts from 'echarts/core';
import { CanvasRenderer, SVGRenderer } from 'echarts/renderers';

echarts.use([
  LineChart,
  ScatterChart,
  GridComponent,
  TooltipComponent,
  LegendComponent,
  MarkLineComponent,
  MarkAreaComponent,
  DataZoomComponent,
  BrushComponent,
  CanvasRenderer,
  SVGRenderer,
]);

export default echarts;
export * from 'echarts/core';
