import express from 'express';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { errorHandler } from '../../server/platform/http/error-handler.ts';
import { createTestWorld, signIn, type TestWorld } from '../support/test-app.ts';

let world: TestWorld;
beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'] });
});
afterAll(() => world.close());

describe('bad input gets a clear 4xx, never a 500', () => {
  it('malformed JSON → 400 with a message', async () => {
    const response = await request(world.app)
      .post('/api/me')
      .set('Content-Type', 'application/json')
      .send('{"broken": ');
    expect(response.status).toBe(400);
    expect(response.body.error.message).toMatch(/not valid JSON/);
  });

  it('an oversized body → 413', async () => {
    const response = await request(world.app)
      .post('/api/me')
      .set('Content-Type', 'application/json')
      .send(JSON.stringify({ padding: 'x'.repeat(200_000) }));
    expect(response.status).toBe(413);
  });

  it('a wrong content type on the API → 415', async () => {
    const response = await request(world.app).post('/api/me').set('Content-Type', 'text/plain').send('hello');
    expect(response.status).toBe(415);
    expect(response.body.error.message).toMatch(/application\/json/);
  });

  it('an unknown page → the 404 page; an unknown API path → JSON 404', async () => {
    const { agent } = await signIn(world.app, world.users.analyst!.email, world.users.analyst!.password);
    const page = await agent.get('/no/such/page').set('Accept', 'text/html');
    expect(page.status).toBe(404);
    expect(page.text).toContain('Not found');
    const api = await agent.get('/api/no-such-thing');
    expect(api.status).toBe(404);
    expect(api.body.error.status).toBe(404);
  });

  it('a bad query parameter → 400 naming the field', async () => {
    const { agent } = await signIn(world.app, world.users.analyst!.email, world.users.analyst!.password);
    const response = await agent.get('/api/activity?limit=lots');
    expect(response.status).toBe(400);
    expect(response.body.error.details[0].field).toBe('limit');
  });

  it('an unexpected failure → 500 page that leaks no internals', async () => {
    const app = express();
    app.locals.assets = { scripts: [], styles: [] };
    app.get('/api/boom', () => {
      throw new Error('secret connection string postgres://user:pw@host/db');
    });
    app.use(errorHandler);
    const original = console.error;
    console.error = () => {};
    try {
      const response = await request(app).get('/api/boom');
      expect(response.status).toBe(500);
      expect(JSON.stringify(response.body)).not.toContain('postgres://');
      expect(response.body.error.message).toMatch(/unexpected error/);
    } finally {
      console.error = original;
    }
  });

  it('/healthz reports the database reachable', async () => {
    const response = await request(world.app).get('/healthz');
    expect(response.status).toBe(200);
    expect(response.body).toEqual({ status: 'ok', database: 'reachable' });
  });

  it('sends a strict Content-Security-Policy', async () => {
    const response = await request(world.app).get('/signin');
    const csp = response.headers['content-security-policy'] as string;
    expect(csp).toContain("script-src 'self'");
    expect(csp).toContain("frame-ancestors 'none'");
    expect(csp).not.toContain('unsafe-inline');
  });
});
