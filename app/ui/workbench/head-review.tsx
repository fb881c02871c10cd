"use client";

import useSWR from "swr";
import type { CommitBadge } from "@/app/lib/review/diffs";
import { ReviewStateBadge } from "@/app/ui/review/badges";
import { getJson } from "@/app/ui/fetch";

/** The review state of a network's newest commit, for the workspace list (GET /api/commits/[id]/review). */
export function HeadReview({ commitId }: { commitId: string }) {
  const { data } = useSWR<CommitBadge>(`/api/commits/${commitId}/review`, getJson, { revalidateOnFocus: false });
  if (!data) return null;
  return (
    <span data-head-review={data.review} title="Review state of the newest commit">
      <ReviewStateBadge state={data.review} />
    </span>
  );
}
