import { describe, expect, it } from 'vitest';
import { ConfigError, loadConfig } from '../../server/config.ts';

describe('configuration from the environment', () => {
  it('has local defaults for every setting', () => {
    const config = loadConfig({});
    expect(config.port).toBe(8080);
    expect(config.host).toBe('127.0.0.1');
    expect(config.env).toBe('development');
    expect(config.publicUrl).toBe('http://127.0.0.1:8080');
    expect(config.uploadLimitBytes).toBe(4_000_000_000);
    expect(config.storageDir.endsWith('uploads')).toBe(true);
  });

  it('reads PORT', () => {
    expect(loadConfig({ PORT: '18080' }).port).toBe(18080);
  });

  it.each([
    ['PORT', 'abc'],
    ['PORT', '70000'],
    ['DATABASE_URL', 'mysql://x'],
    ['NODE_ENV', 'staging'],
    ['UPLOAD_LIMIT_BYTES', '-5'],
    ['SERVE_CLIENT', 'maybe'],
  ])('a bad %s gives one clear line naming it', (name, value) => {
    let caught: unknown;
    try {
      loadConfig({ [name]: value });
    } catch (err) {
      caught = err;
    }
    expect(caught).toBeInstanceOf(ConfigError);
    const message = (caught as ConfigError).message;
    expect(message.split('\n')).toHaveLength(1);
    expect(message).toContain(name);
    expect(message).toContain(`"${value}"`);
  });

  it('reports every bad variable, one line each', () => {
    expect(() => loadConfig({ PORT: 'x', LOG_LEVEL: 'loud' })).toThrow(/PORT[\s\S]*\n[\s\S]*LOG_LEVEL|LOG_LEVEL[\s\S]*\n[\s\S]*PORT/);
  });
});
