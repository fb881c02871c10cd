/** The compare page's text section: lines added and removed, a link to switch the view, and the diff. */
import Link from "next/link";
import type { TextDiff } from "@/app/lib/review/text-diff";
import { SideBySideDiff } from "./side-by-side-diff";
import { UnifiedDiff } from "./unified-diff";

export interface TextDiffSectionProps {
  text: TextDiff;
  view: "side" | "unified";
  /** Where the "Unified view" / "Side-by-side view" link goes (the same comparison in the other view). */
  otherViewHref: string;
}

export function TextDiffSection({ text, view, otherViewHref }: TextDiffSectionProps) {
  return (
    <section aria-labelledby="text-diff" className="space-y-2">
      <div className="flex items-baseline gap-4">
        <h2 id="text-diff" className="text-lg font-semibold">
          Text
        </h2>
        <span className="text-sm text-stone-600">
          <span className="text-moss-700">+{text.added}</span> <span className="text-ember-500">−{text.removed}</span>{" "}
          lines
        </span>
        <span className="flex-1" />
        <Link href={otherViewHref} className="text-sm text-moss-700 hover:underline">
          {view === "side" ? "Unified view" : "Side-by-side view"}
        </Link>
      </div>
      {!text.complete ? (
        <p className="text-sm text-amber-800">The texts differ too much to pair lines; shown as a whole replacement.</p>
      ) : null}
      <div className="overflow-x-auto rounded border border-stone-300 bg-white font-mono text-xs">
        {view === "unified" ? <UnifiedDiff rows={text.unified} /> : <SideBySideDiff rows={text.sideBySide} />}
      </div>
    </section>
  );
}
