"use client";

import useSWR from "swr";
import type { CommitBadge } from "@/app/lib/review/diffs";
import { ExpectationBadgeView, ReviewStateBadge } from "@/app/ui/review/badges";
import { getJson } from "@/app/ui/fetch";

/**
 * The review state of a network's newest commit and its expectations' status (from its newest ended run), for the
 * workspace list (GET /api/commits/[id]/review).
 */
export function HeadReview({ commitId }: { commitId: string }) {
  const { data } = useSWR<CommitBadge>(`/api/commits/${commitId}/review`, getJson, { revalidateOnFocus: false });
  if (!data) return null;
  return (
    <span className="inline-flex items-center gap-1">
      <span data-head-review={data.review} title="Review state of the newest commit">
        <ReviewStateBadge state={data.review} />
      </span>
      <span data-head-expectations={data.expectations.status} title="Expectations of the newest commit's newest run">
        <ExpectationBadgeView badge={data.expectations} />
      </span>
    </span>
  );
}
