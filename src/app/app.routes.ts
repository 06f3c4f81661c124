import type { Routes } from '@angular/router';
import { authGuard } from './core/auth/auth-guard';
import { groupGuard } from './core/group/group-guard';
import { homeRedirect } from './core/group/home-redirect';

export const routes: Routes = [
  {
    path: 'sign-in',
    loadComponent: () => import('./sign-in/sign-in').then((m) => m.SignIn),
    title: 'Sign in · Poleward',
  },
  {
    path: 'invitation',
    loadComponent: () => import('./invitation/invitation').then((m) => m.Invitation),
    title: 'Invitation · Poleward',
  },
  {
    path: 'reset-password',
    loadComponent: () => import('./reset-password/reset-password').then((m) => m.ResetPassword),
    title: 'Reset password · Poleward',
  },
  {
    path: '',
    canActivate: [authGuard],
    loadComponent: () => import('./core/shell/shell').then((m) => m.Shell),
    children: [
      { path: '', pathMatch: 'full', canActivate: [homeRedirect], children: [] },
      {
        path: 'g/:groupSlug',
        canActivate: [groupGuard],
        children: [
          { path: '', pathMatch: 'full', redirectTo: 'dashboard' },
          {
            path: 'dashboard',
            loadComponent: () => import('./dashboard/dashboard').then((m) => m.Dashboard),
            title: 'Dashboard · Poleward',
          },
          {
            path: 'members',
            loadComponent: () => import('./members/members').then((m) => m.Members),
            title: 'Members · Poleward',
          },
          { path: 'models', loadChildren: () => import('./models/models.routes').then((m) => m.modelsRoutes) },
          { path: 'runs', loadChildren: () => import('./runs/runs.routes').then((m) => m.runsRoutes) },
          { path: 'catalogue', loadChildren: () => import('./catalogue/catalogue.routes').then((m) => m.catalogueRoutes) },
          { path: 'studies', loadChildren: () => import('./studies/studies.routes').then((m) => m.studiesRoutes) },
          { path: 'fits', loadChildren: () => import('./fits/fits.routes').then((m) => m.fitsRoutes) },
          {
            path: 'fabrication',
            loadComponent: () => import('./fabrication/fabrication-page').then((m) => m.FabricationPage),
            title: 'Fabrication · Poleward',
          },
          { path: 'review', loadComponent: () => import('./review/review-queue').then((m) => m.ReviewQueue), title: 'Review · Poleward' },
        ],
      },
      {
        path: 'tokens',
        loadComponent: () => import('./tokens/tokens').then((m) => m.Tokens),
        title: 'API tokens · Poleward',
      },
      {
        path: 'account',
        loadComponent: () => import('./account/account').then((m) => m.Account),
        title: 'Account · Poleward',
      },
      {
        path: 'outbox',
        loadComponent: () => import('./outbox/outbox').then((m) => m.Outbox),
        title: 'Mail outbox · Poleward',
      },
      {
        path: 'outbox/:messageId',
        loadComponent: () => import('./outbox/outbox-message').then((m) => m.OutboxMessage),
        title: 'Message · Poleward',
      },
      {
        path: 'no-group',
        loadComponent: () => import('./core/shell/no-group').then((m) => m.NoGroup),
        title: 'No group · Poleward',
      },
      {
        path: '**',
        loadComponent: () => import('./core/shell/not-found').then((m) => m.NotFound),
        title: 'Not found · Poleward',
      },
    ],
  },
];
