/**
 * The compare page's Expectations section: each expectation's status before → after (from the runs' stored
 * summaries), newly failing first, with the margin on each side.
 */
import { formatValue, type Notation } from "@/app/lib/format";
import type { ExpectationChange, ExpectationSide } from "@/app/lib/review/expectation-compare";
import { CompareSection } from "./compare-section";

const CHANGE_STYLE: Record<ExpectationChange["change"], string> = {
  "newly failing": "font-semibold text-ember-500",
  "still failing": "text-ember-500",
  added: "text-stone-600",
  "newly passing": "font-semibold text-moss-700",
  removed: "text-stone-500",
  "still passing": "text-moss-700",
};

function status(s: ExpectationSide | null, notation: Notation): string {
  if (!s) return "—";
  const margin = s.margin === null ? "" : `, margin ${formatValue(s.margin, s.unit, { notation, digits: 3 })}`;
  return `${s.passed ? "pass" : "fail"} (${s.pointsPassed.toLocaleString("en-US")}/${s.points.toLocaleString("en-US")}${margin})`;
}

export function ExpectationsSection({
  changes,
  labels,
  notation = "si",
}: {
  changes: ExpectationChange[];
  labels: [string, string];
  /** The reader's notation (its cookie, read by the page). */
  notation?: Notation;
}) {
  const newlyFailing = changes.filter((c) => c.change === "newly failing").length;
  const changed = changes.filter((c) => c.change !== "still passing" && c.change !== "still failing").length;
  return (
    <CompareSection
      id="expectations-diff"
      title="Expectations"
      beside={
        <>
          <span className="text-sm text-stone-600" data-testid="expectation-counts">
            {changes.length === 0
              ? "neither commit's newest finished runs state any"
              : `${changed} changed status${newlyFailing ? `, ${newlyFailing} newly failing` : ""}`}
          </span>
        </>
      }
    >
      {changes.length ? (
        <div className="overflow-x-auto">
          <table className="w-full text-left text-sm">
            <thead className="text-xs text-stone-500">
              <tr>
                <th className="py-1 pr-3 font-normal">expectation</th>
                <th className="py-1 pr-3 font-normal">analysis</th>
                <th className="py-1 pr-3 font-normal">{labels[0]}</th>
                <th className="py-1 pr-3 font-normal">{labels[1]}</th>
                <th className="py-1 pr-3 font-normal">change</th>
              </tr>
            </thead>
            <tbody>
              {changes.map((c) => (
                <tr
                  key={`${c.analysis} ${c.name}`}
                  data-expectation-change={c.change}
                  data-expectation={c.name}
                  className="border-t border-stone-100"
                >
                  <td className="py-1 pr-3 font-mono">{c.name}</td>
                  <td className="py-1 pr-3 text-stone-600">{c.analysis}</td>
                  <td className="tabular py-1 pr-3">{status(c.from, notation)}</td>
                  <td className="tabular py-1 pr-3">{status(c.to, notation)}</td>
                  <td className={`py-1 pr-3 ${CHANGE_STYLE[c.change]}`}>{c.change}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      ) : null}
    </CompareSection>
  );
}
