import type { Routes } from '@angular/router';
import { designerOnly } from '../core/group/designer-only';

/** Mounted at /g/:groupSlug/models. */
export const modelsRoutes: Routes = [
  { path: '', loadComponent: () => import('./model-list').then((m) => m.ModelList), title: 'Models · Poleward' },
  {
    path: 'new',
    canActivate: [designerOnly],
    loadComponent: () => import('./model-editor').then((m) => m.ModelEditor),
    title: 'New model · Poleward',
  },
  { path: ':modelId', loadComponent: () => import('./model-editor').then((m) => m.ModelEditor), title: 'Model · Poleward' },
];
