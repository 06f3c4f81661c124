import type { Routes } from '@angular/router';
import { provideEchartsCore } from 'ngx-echarts';

/** Mounted at /g/:groupSlug/fits. echarts is loaded only when a chart first shows. */
export const fitsRoutes: Routes = [
  {
    path: '',
    providers: [provideEchartsCore({ echarts: () => import('../core/charts/echarts') })],
    children: [
      { path: '', loadComponent: () => import('./fit-list').then((m) => m.FitList), title: 'Fits · Poleward' },
      { path: 'new', loadComponent: () => import('./fit-workspace').then((m) => m.FitWorkspace), title: 'New fit · Poleward' },
      { path: ':fitId', loadComponent: () => import('./fit-workspace').then((m) => m.FitWorkspace), title: 'Fit · Poleward' },
    ],
  },
];
