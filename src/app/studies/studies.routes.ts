import type { Routes } from '@angular/router';
import { provideEchartsCore } from 'ngx-echarts';
import { designerOnly } from '../core/group/designer-only';

/** Mounted at /g/:groupSlug/studies. echarts is loaded only when a chart first shows. */
export const studiesRoutes: Routes = [
  {
    path: '',
    providers: [provideEchartsCore({ echarts: () => import('./echarts') })],
    children: [
      { path: '', loadComponent: () => import('./study-list').then((m) => m.StudyList), title: 'Studies · Poleward' },
      {
        path: 'new',
        canActivate: [designerOnly],
        loadComponent: () => import('./study-launcher').then((m) => m.StudyLauncher),
        title: 'New study · Poleward',
      },
      { path: ':studyId', loadComponent: () => import('./study-page').then((m) => m.StudyPage), title: 'Study · Poleward' },
    ],
  },
];
