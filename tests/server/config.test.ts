import { describe, expect, it } from 'vitest';
import { ConfigError, loadConfig } from '../../server/config.js';

const secret = { POLEWARD_JWT_SECRET: 'x'.repeat(40) };

describe('config', () => {
  it('fails fast naming every bad variable', () => {
    const load = () => loadConfig({ ...secret, POLEWARD_PORT: 'eighty', POLEWARD_PUBLIC_URL: 'ftp://host' });
    expect(load).toThrow(ConfigError);
    expect(load).toThrow(/POLEWARD_PORT: must be a port number\n.*POLEWARD_PUBLIC_URL/);
  });

  it('requires POLEWARD_JWT_SECRET in production, and a long one', () => {
    expect(() => loadConfig({ NODE_ENV: 'production' })).toThrow(/POLEWARD_JWT_SECRET: required when NODE_ENV=production/);
    expect(() => loadConfig({ POLEWARD_JWT_SECRET: 'short' })).toThrow(/POLEWARD_JWT_SECRET: must be at least 32 characters/);
  });

  it('defaults to the contract values and derives the database URL from the DB port', () => {
    const c = loadConfig({ ...secret, POLEWARD_DB_PORT: '5999', POLEWARD_PUBLIC_URL: 'https://poleward.lab.example/' });
    expect(c.port).toBe(8640);
    expect(c.databaseUrl).toBe('postgres://postgres@127.0.0.1:5999/poleward');
    expect(c.publicUrl).toBe('https://poleward.lab.example');
    expect(c.smtpUrl).toBe('smtp://127.0.0.1:2526');
    expect(c.workers).toBe(2);
  });

  it('treats only plain smtp on the loopback as the local stand-in', () => {
    expect(loadConfig({ ...secret }).mailStandIn).toBe(true);
    expect(loadConfig({ ...secret, POLEWARD_SMTP_URL: 'smtp://localhost:2600' }).mailStandIn).toBe(true);
    expect(loadConfig({ ...secret, POLEWARD_SMTP_URL: 'smtps://u:p@mail.example.org:465' }).mailStandIn).toBe(false);
    expect(loadConfig({ ...secret, POLEWARD_SMTP_URL: 'smtp://mail.example.org:587' }).mailStandIn).toBe(false);
  });
});
