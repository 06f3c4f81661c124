import type { Routes } from '@angular/router';
import { provideEchartsCore } from 'ngx-echarts';

/** Mounted at /g/:groupSlug/catalogue. echarts is loaded only when the pole plot first shows. */
export const catalogueRoutes: Routes = [
  {
    path: '',
    providers: [provideEchartsCore({ echarts: () => import('../core/charts/echarts') })],
    children: [
      { path: '', loadComponent: () => import('./catalogue-table').then((m) => m.CatalogueTable), title: 'Catalogue · Poleward' },
      {
        path: 'resonances/:resonanceId',
        loadComponent: () => import('./resonance-detail').then((m) => m.ResonanceDetail),
        title: 'Resonance · Poleward',
      },
    ],
  },
];
