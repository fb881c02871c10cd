/**
 * Refuses common and guessable passwords (OWASP ASVS 4.0 V2.1.7, "passwords
 * submitted … are checked against a set of breached passwords"; V2.1.8 a
 * strength meter) with zxcvbn-ts and its common-password dictionary. Server
 * only: the dictionary is large and is loaded on first use.
 *
 * A password passes at score ≥ MIN_SCORE (zxcvbn's 0–4 scale; 3 is "safely
 * unguessable: moderate protection from offline slow-hash scenario", zxcvbn's
 * own description). The person's name and address count as guessable words.
 */
import { ZxcvbnFactory } from "@zxcvbn-ts/core";
import * as common from "@zxcvbn-ts/language-common";

export const MIN_SCORE = 3;

let factory: ZxcvbnFactory | null = null;
function zxcvbn(): ZxcvbnFactory {
  factory ??= new ZxcvbnFactory({ dictionary: { ...common.dictionary }, graphs: common.adjacencyGraphs });
  return factory;
}

/** Our words for zxcvbn's warnings (its keys; the English package is not loaded). */
const WARNINGS: Record<string, string> = {
  straightRow: "it is a straight row of keys",
  keyPattern: "it is a short keyboard pattern",
  simpleRepeat: 'it repeats a character ("aaa")',
  extendedRepeat: 'it repeats a short pattern ("abcabc")',
  sequences: 'it is a common sequence ("abc", "6543")',
  recentYears: "it is or contains a recent year",
  dates: "it is or contains a date",
  topTen: "it is one of the ten most used passwords",
  topHundred: "it is one of the hundred most used passwords",
  common: "it is a commonly used password",
  similarToCommon: "it is a small change to a commonly used password",
  wordByItself: "a single word is easy to guess",
  namesByThemselves: "a name on its own is easy to guess",
  commonNames: "common names are easy to guess",
  userInputs: "it contains your name or e-mail address",
  pwned: "it has appeared in a data breach",
};

/** Why `password` is too easy to guess, or null when it is strong enough. Never throws. */
export function weakPasswordReason(password: string, personal: string[] = []): string | null {
  const inputs = personal.flatMap((p) => [p, ...p.split(/[@.\s_+-]+/)]).filter((w) => w.length >= 3);
  const result = zxcvbn().check(password, inputs);
  if (result.score >= MIN_SCORE) return null;
  const why = (result.feedback.warning && WARNINGS[result.feedback.warning]) || "it is too easy to guess";
  return `too easy to guess: ${why}; use a longer phrase of several unrelated words`;
}
