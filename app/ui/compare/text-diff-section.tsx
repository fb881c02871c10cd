/** The compare page's text section: how many lines went and came, a link to switch the view, and the diff. */
import { HoverLink } from "@/app/ui/hover-link";
import type { TextDiff } from "@/app/lib/review/text-diff";
import { SideBySideDiff } from "./side-by-side-diff";
import { UnifiedDiff } from "./unified-diff";
import { CompareSection } from "./compare-section";

export interface TextDiffSectionProps {
  text: TextDiff;
  view: "side" | "unified";
  /** Where the "One column" / "Facing columns" link goes (the same comparison in the other view). */
  otherViewHref: string;
  /** Headings of the two columns (older, newer). */
  labels: [string, string];
}

export function TextDiffSection({ text, view, otherViewHref, labels }: TextDiffSectionProps) {
  return (
    <CompareSection
      id="text-diff"
      title="Text"
      beside={
        <>
          <span className="text-sm text-stone-600" data-testid="text-counts">
            {text.removed} {text.removed === 1 ? "line" : "lines"} went, {text.added} came
          </span>
          <span className="flex-1" />
          <span className="text-sm text-stone-600">
            {view === "side" ? "facing columns" : "one column"} ·{" "}
            <HoverLink href={otherViewHref} className="text-moss-700 hover:underline">
              {view === "side" ? "show in one column" : "show in facing columns"}
            </HoverLink>
          </span>
        </>
      }
    >
      {!text.complete ? (
        <p className="text-sm text-amber-800">The texts differ too much to pair lines; shown as a whole replacement.</p>
      ) : null}
      <div className="overflow-x-auto rounded border border-stone-300 bg-white font-mono text-xs">
        {view === "unified" ? (
          <UnifiedDiff rows={text.unified} />
        ) : (
          <SideBySideDiff rows={text.sideBySide} labels={labels} />
        )}
      </div>
    </CompareSection>
  );
}
