"use client";

import useSWR from "swr";
import type { CommitBadge } from "@/app/lib/review/diffs";
import { CommitReviewBadges } from "@/app/ui/review/badges";
import { getJson } from "@/app/ui/fetch";

/** A history row's review state and "N values moved" badges (GET /api/commits/[id]/review). */
export function HistoryReview({ commitId }: { commitId: string }) {
  const { data } = useSWR<CommitBadge>(`/api/commits/${commitId}/review`, getJson, { revalidateOnFocus: false });
  if (!data || (data.review === "open" && data.diffs.length === 0 && data.expectations.status === "not-run"))
    return null;
  return (
    <span className="mt-1 flex" data-slot="history-review">
      <CommitReviewBadges badge={data} />
    </span>
  );
}
