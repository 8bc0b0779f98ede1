import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { openDatabase, setDbForTesting, type Db } from '@/db/client';
import {
  backoffMs,
  clearCounters,
  rememberAddress,
  reserveAttempt,
  signInCounters,
  throttleRules,
  waitMs,
  type ThrottleRule,
} from '@/lib/auth/throttle';

const rule: ThrottleRule = { scope: 't', free: 3, baseMs: 1000, maxMs: 10_000, decayMs: 60_000 };

describe('backoffMs', () => {
  it('is free for the first attempts, then doubles from the base up to the cap', () => {
    expect([1, 2, 3, 4, 5, 6, 7, 8].map((n) => backoffMs(rule, n))).toEqual([0, 0, 1000, 2000, 4000, 8000, 10_000, 10_000]);
  });
  it('never overflows for huge counts', () => {
    expect(backoffMs(rule, 10_000)).toBe(10_000);
  });
});

describe('database-kept counters', () => {
  let db: Db;
  beforeEach(() => {
    db = openDatabase(':memory:');
    setDbForTesting(db);
  });
  afterEach(() => setDbForTesting(undefined));

  it('refuses while a wait runs, without counting the refused attempt, and lets through after it', () => {
    const c = [{ rule, key: 'k' }];
    const t0 = 1_000_000;
    expect(reserveAttempt(c, t0, db)).toBe(0);
    expect(reserveAttempt(c, t0 + 1, db)).toBe(0);
    expect(reserveAttempt(c, t0 + 2, db)).toBe(0); // third attempt: counted, starts a 1 s wait
    expect(reserveAttempt(c, t0 + 3, db)).toBe(999);
    expect(reserveAttempt(c, t0 + 500, db)).toBe(502);
    expect(reserveAttempt(c, t0 + 1002, db)).toBe(0); // fourth counted attempt: 2 s wait
    expect(waitMs(c, t0 + 1003, db)).toBe(1999);
  });

  it('starts over after decayMs without attempts', () => {
    const c = [{ rule, key: 'k' }];
    for (let i = 0; i < 3; i++) reserveAttempt(c, 1000 + i, db);
    expect(waitMs(c, 1003, db)).toBeGreaterThan(0);
    expect(reserveAttempt(c, 1002 + 60_001 + 1000, db)).toBe(0);
    const row = db.$client.prepare("select count from auth_throttle where scope = 't' and key = 'k'").get() as { count: number };
    expect(row.count).toBe(1);
  });

  it('keys are independent', () => {
    for (let i = 0; i < 3; i++) reserveAttempt([{ rule, key: 'a' }], 1000 + i, db);
    expect(waitMs([{ rule, key: 'a' }], 1003, db)).toBeGreaterThan(0);
    expect(reserveAttempt([{ rule, key: 'b' }], 1003, db)).toBe(0);
  });

  it('clearCounters removes the wait', () => {
    for (let i = 0; i < 3; i++) reserveAttempt([{ rule, key: 'a' }], 1000 + i, db);
    clearCounters([{ rule, key: 'a' }], db);
    expect(waitMs([{ rule, key: 'a' }], 1003, db)).toBe(0);
  });

  it('sign-in is charged to account+address and address; the account-wide counter skips known addresses', () => {
    const scopes = (cs: { rule: ThrottleRule }[]) => cs.map((c) => c.rule.scope).sort();
    expect(scopes(signInCounters('ada@x.example', '10.0.0.1', db))).toEqual(['signin-account', 'signin-address', 'signin-pair']);
    rememberAddress('ada@x.example', '10.0.0.1', Date.now(), db);
    expect(scopes(signInCounters('ada@x.example', '10.0.0.1', db))).toEqual(['signin-address', 'signin-pair']);
    expect(scopes(signInCounters('ada@x.example', '10.0.0.2', db))).toEqual(['signin-account', 'signin-address', 'signin-pair']);
  });

  it('a flood against one account from many addresses holds back new addresses but not the owner\'s known one', () => {
    const rules = throttleRules();
    rememberAddress('ada@x.example', '10.0.0.1', 0, db);
    const t0 = 5_000_000;
    // one wrong password from each of many addresses: no pair or address limit is reached, the account one is
    for (let i = 0; i < rules.signInAccount.free; i++) expect(reserveAttempt(signInCounters('ada@x.example', `192.0.2.${i}`, db), t0 + i, db)).toBe(0);
    expect(reserveAttempt(signInCounters('ada@x.example', '192.0.2.200', db), t0 + 100, db)).toBeGreaterThan(0);
    expect(reserveAttempt(signInCounters('ada@x.example', '10.0.0.1', db), t0 + 100, db)).toBe(0);
  });

  it('the counters survive reopening the database file (restart)', async () => {
    const { mkdtempSync, rmSync } = await import('node:fs');
    const { tmpdir } = await import('node:os');
    const path = await import('node:path');
    const dir = mkdtempSync(path.join(tmpdir(), 'trenchant-throttle-'));
    try {
      const file = path.join(dir, 'x.db');
      const first = openDatabase(file);
      for (let i = 0; i < 3; i++) reserveAttempt([{ rule, key: 'k' }], 1000 + i, first);
      first.$client.close();
      const second = openDatabase(file);
      expect(waitMs([{ rule, key: 'k' }], 1003, second)).toBe(999);
      second.$client.close();
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});

describe('recordSignInSuccess', () => {
  let db: Db;
  beforeEach(() => {
    db = openDatabase(':memory:');
    setDbForTesting(db);
  });
  afterEach(() => setDbForTesting(undefined));

  it('clears the account and pair waits, gives the address its attempt back and remembers it', async () => {
    const { recordSignInSuccess } = await import('@/lib/auth/throttle');
    const rules = throttleRules();
    const t0 = 9_000_000;
    for (let i = 0; i < rules.signInPair.free; i++) reserveAttempt(signInCounters('bo@x.example', '10.1.1.1', db), t0 + i, db);
    expect(waitMs(signInCounters('bo@x.example', '10.1.1.1', db), t0 + 10, db)).toBeGreaterThan(0);
    recordSignInSuccess('bo@x.example', '10.1.1.1', t0 + 10, db);
    expect(waitMs(signInCounters('bo@x.example', '10.1.1.1', db), t0 + 11, db)).toBe(0);
    const address = db.$client.prepare("select count from auth_throttle where scope = 'signin-address'").get() as { count: number };
    expect(address.count).toBe(rules.signInPair.free - 1);
    expect(signInCounters('bo@x.example', '10.1.1.1', db).map((c) => c.rule.scope)).not.toContain('signin-account');
  });
});
