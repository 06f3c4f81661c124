/**
 * The parts of echarts the study views use: the run charts' parts plus bars (ensemble
 * histograms) and the continuous visual map (trajectories coloured by the parameter).
 * Loaded lazily through provideEchartsCore in studies.routes.ts.
 */
import { BarChart, LineChart, ScatterChart } from 'echarts/charts';
import { GridComponent, LegendComponent, MarkLineComponent, TooltipComponent, VisualMapComponent } from 'echarts/components';
import * as echarts from 'echarts/core';
import { CanvasRenderer, SVGRenderer } from 'echarts/renderers';

echarts.use([
  BarChart,
  LineChart,
  ScatterChart,
  GridComponent,
  LegendComponent,
  MarkLineComponent,
  TooltipComponent,
  VisualMapComponent,
  CanvasRenderer,
  SVGRenderer,
]);

export default echarts;
export * from 'echarts/core';
