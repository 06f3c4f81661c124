import type { Routes } from '@angular/router';
import { provideEchartsCore } from 'ngx-echarts';
import { designerOnly } from '../core/group/designer-only';

/** Mounted at /g/:groupSlug/runs. echarts is loaded only when a chart first shows. */
export const runsRoutes: Routes = [
  {
    path: '',
    providers: [provideEchartsCore({ echarts: () => import('../core/charts/echarts') })],
    children: [
      { path: '', loadComponent: () => import('./run-list').then((m) => m.RunList), title: 'Runs · Poleward' },
      {
        path: 'new',
        canActivate: [designerOnly],
        loadComponent: () => import('./run-launcher').then((m) => m.RunLauncher),
        title: 'Launch a run · Poleward',
      },
      { path: 'compare', loadComponent: () => import('./run-compare').then((m) => m.RunCompare), title: 'Compare · Poleward' },
      { path: ':runId', loadComponent: () => import('./run-detail').then((m) => m.RunDetail), title: 'Run · Poleward' },
    ],
  },
];
