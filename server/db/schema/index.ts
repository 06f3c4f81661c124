// The whole schema in one import, for the drizzle client and drizzle-kit. One file per area.
export * from './users.js';
export * from './groups.js';
export * from './invitations.js';
export * from './credentials.js';
export * from './audit.js';
export * from './outbox.js';
export * from './models.js';
export * from './runs.js';
export * from './catalogue.js';
export * from './mode-maps.js';
export * from './fits.js';
export * from './fabrication.js';
export * from './studies.js';
