import { ZxcvbnFactory } from '@zxcvbn-ts/core';
import { adjacencyGraphs, dictionary } from '@zxcvbn-ts/language-common';

/**
 * Refuses common and trivial passwords with zxcvbn (the @zxcvbn-ts port and its common-password, names and
 * keyboard-pattern dictionaries). A password needs score 3 of 4, i.e. an estimated 10^8 guesses or more; the
 * person's own e-mail and name count as known words.
 */
export const MIN_SCORE = 3;

let factory: ZxcvbnFactory | undefined;
function zxcvbn(): ZxcvbnFactory {
  factory ??= new ZxcvbnFactory({ dictionary, graphs: adjacencyGraphs });
  return factory;
}

// zxcvbn-ts returns message keys without its translation package; these are our own words for them.
const WARNINGS: Record<string, string> = {
  straightRow: 'a row of keys on the keyboard is easy to guess',
  keyPattern: 'a keyboard pattern is easy to guess',
  simpleRepeat: 'repeated characters like "aaaaaaaaaa" are easy to guess',
  extendedRepeat: 'repeated groups of characters like "abcabcabc" are easy to guess',
  sequences: 'sequences like "abcdef" or "123456" are easy to guess',
  recentYears: 'recent years are easy to guess',
  dates: 'dates are easy to guess',
  topTen: 'this is one of the ten most used passwords',
  topHundred: 'this is one of the hundred most used passwords',
  common: 'this is a commonly used password',
  similarToCommon: 'this is close to a commonly used password',
  wordByItself: 'a single word is easy to guess',
  namesByThemselves: 'a single name is easy to guess',
  commonNames: 'common names are easy to guess',
  userInputs: 'it contains your name or e-mail address',
  pwned: 'this password appeared in a data breach',
};

/** null when acceptable; else one sentence saying why not and what to do. */
export function passwordWeakness(password: string, userInputs: string[] = []): string | null {
  const inputs = userInputs.flatMap((s) => [s, ...s.toLowerCase().split(/[^a-z0-9]+/)]).filter((s) => s.length >= 3);
  const result = zxcvbn().check(password.slice(0, 100), inputs);
  if (result.score >= MIN_SCORE) return null;
  const why = (result.feedback.warning && WARNINGS[result.feedback.warning]) || 'it is easy to guess';
  return `This password is too easy to guess: ${why}. Use a few unrelated words or a longer phrase.`;
}
