import { asc } from "drizzle-orm";
import { db } from "@/db";
import { workspaces } from "@/db/schema";

export interface WorkspaceSummary {
  id: string;
  slug: string;
  name: string;
  description: string;
}

/** Every workspace, by name. */
export function listWorkspaces(): WorkspaceSummary[] {
  return db()
    .select({ id: workspaces.id, slug: workspaces.slug, name: workspaces.name, description: workspaces.description })
    .from(workspaces)
    .orderBy(asc(workspaces.name))
    .all();
}
