import { describe, expect, it } from 'vitest';
import { ConfigError, configToEnv, parseConfig } from './config.js';

describe('parseConfig', () => {
  it('gives the documented defaults for an empty environment', () => {
    const c = parseConfig({}, '/srv/cribra');
    expect(c.port).toBe(8080);
    expect(c.dataDir).toBe('/srv/cribra/data');
    expect(c.database).toEqual({
      kind: 'sqlite',
      file: '/srv/cribra/data/cribra.sqlite',
      url: 'sqlite:/srv/cribra/data/cribra.sqlite',
    });
    expect(c.redisUrl).toBeNull();
    expect(c.maxTextLength).toBe(100_000);
    expect(c.undoWindowSeconds).toBe(300);
    expect(c.demo).toBe(true);
  });

  it('reads DEMO as on/off and refuses other values', () => {
    expect(parseConfig({ DEMO: 'off' }).demo).toBe(false);
    expect(parseConfig({ DEMO: 'on' }).demo).toBe(true);
    expect(() => parseConfig({ DEMO: 'later' })).toThrow(/DEMO="later": expected on\/off/);
    // The demo is for the embedded quick start: with a database of one's own it is off unless asked for.
    expect(parseConfig({ DATABASE_URL: 'postgres://db/cribra' }).demo).toBe(false);
    expect(parseConfig({ DATABASE_URL: 'sqlite:/srv/other.sqlite' }).demo).toBe(false);
    expect(parseConfig({ DATABASE_URL: 'postgres://db/cribra', DEMO: 'on' }).demo).toBe(true);
  });

  it('reads URGENT_WEBHOOK_URL as an http(s) URL, off by default, and passes it on to child processes', () => {
    expect(parseConfig({}).urgentWebhookUrl).toBeNull();
    const c = parseConfig({ URGENT_WEBHOOK_URL: 'https://alerts.example/cribra' });
    expect(c.urgentWebhookUrl).toBe('https://alerts.example/cribra');
    expect(configToEnv(c).URGENT_WEBHOOK_URL).toBe('https://alerts.example/cribra');
    expect(() => parseConfig({ URGENT_WEBHOOK_URL: 'ftp://alerts.example' })).toThrow(
      /URGENT_WEBHOOK_URL: expected an http:\/\/ or https:\/\/ URL/,
    );
    expect(() => parseConfig({ URGENT_WEBHOOK_URL: 'not a url' })).toThrow(/URGENT_WEBHOOK_URL/);
  });

  it('selects PostgreSQL from a postgres:// URL', () => {
    const c = parseConfig({ DATABASE_URL: 'postgres://u@127.0.0.1:5432/test', REDIS_URL: 'redis://127.0.0.1:6379' });
    expect(c.database.kind).toBe('postgres');
    expect(c.redisUrl).toBe('redis://127.0.0.1:6379');
  });

  it('lists every bad variable in one error', () => {
    let error: unknown;
    try {
      parseConfig({
        PORT: 'eighty',
        DATABASE_URL: 'mysql://x',
        REDIS_URL: 'localhost:6379',
        COOKIE_SECURE: 'maybe',
        LOG_LEVEL: 'loud',
      });
    } catch (e) {
      error = e;
    }
    expect(error).toBeInstanceOf(ConfigError);
    const problems = (error as ConfigError).problems;
    expect(problems).toHaveLength(5);
    expect(problems.map((p) => p.split(/[=:]/)[0])).toEqual([
      'PORT',
      'DATABASE_URL',
      'REDIS_URL',
      'LOG_LEVEL',
      'COOKIE_SECURE',
    ]);
    expect((error as Error).message).toContain('PORT="eighty"');
  });

  it('writes text logs on a terminal and JSON lines otherwise, unless LOG_FORMAT says', () => {
    expect(parseConfig({}, '/srv', true).logFormat).toBe('text');
    expect(parseConfig({}, '/srv', false).logFormat).toBe('json');
    expect(parseConfig({ LOG_FORMAT: 'JSON' }, '/srv', true).logFormat).toBe('json');
    expect(parseConfig({ LOG_FORMAT: 'text' }, '/srv', false).logFormat).toBe('text');
    expect(() => parseConfig({ LOG_FORMAT: 'xml' })).toThrow(/LOG_FORMAT="xml": expected text or json/);
    expect(parseConfig({}).logLevel).toBe('log');
  });

  it('rejects out-of-range numbers', () => {
    expect(() => parseConfig({ PORT: '70000' })).toThrow(/PORT="70000": expected an integer from 1 to 65535/);
    expect(() => parseConfig({ MAX_TEXT_LENGTH: '0' })).toThrow(/MAX_TEXT_LENGTH/);
  });
});
