/**
 * The one entry point to the schema (drizzle.config.ts and db/index.ts read
 * it): every table module, one line each, then the relations between the
 * tables, which `db().query.*` follows.
 */
import { relations } from "drizzle-orm";
import { memberships, users, workspaces } from "./base-schema";
import { commits, networks, runPoints, runs } from "./work-schema";
import { comments, commitDiffs, measurements, reviews, threads } from "./review-schema";

export * from "./base-schema";
export * from "./work-schema";
export * from "./auth-schema";
export * from "./review-schema";

export const usersRelations = relations(users, ({ many }) => ({ memberships: many(memberships) }));

export const workspacesRelations = relations(workspaces, ({ many }) => ({
  memberships: many(memberships),
  networks: many(networks),
}));

export const membershipsRelations = relations(memberships, ({ one }) => ({
  workspace: one(workspaces, { fields: [memberships.workspaceId], references: [workspaces.id] }),
  user: one(users, { fields: [memberships.userId], references: [users.id] }),
}));

export const networksRelations = relations(networks, ({ one, many }) => ({
  workspace: one(workspaces, { fields: [networks.workspaceId], references: [workspaces.id] }),
  commits: many(commits),
  runs: many(runs),
  threads: many(threads),
  measurements: many(measurements),
}));

export const commitsRelations = relations(commits, ({ one, many }) => ({
  network: one(networks, { fields: [commits.networkId], references: [networks.id] }),
  author: one(users, { fields: [commits.authorId], references: [users.id] }),
  runs: many(runs),
  threads: many(threads),
  reviews: many(reviews),
}));

export const runsRelations = relations(runs, ({ one, many }) => ({
  commit: one(commits, { fields: [runs.commitId], references: [commits.id] }),
  network: one(networks, { fields: [runs.networkId], references: [networks.id] }),
  workspace: one(workspaces, { fields: [runs.workspaceId], references: [workspaces.id] }),
  creator: one(users, { fields: [runs.createdBy], references: [users.id] }),
  points: many(runPoints),
}));

export const runPointsRelations = relations(runPoints, ({ one }) => ({
  run: one(runs, { fields: [runPoints.runId], references: [runs.id] }),
}));

export const threadsRelations = relations(threads, ({ one, many }) => ({
  workspace: one(workspaces, { fields: [threads.workspaceId], references: [workspaces.id] }),
  network: one(networks, { fields: [threads.networkId], references: [networks.id] }),
  commit: one(commits, { fields: [threads.commitId], references: [commits.id] }),
  run: one(runs, { fields: [threads.runId], references: [runs.id] }),
  creator: one(users, { fields: [threads.createdBy], references: [users.id] }),
  comments: many(comments),
}));

export const commentsRelations = relations(comments, ({ one }) => ({
  thread: one(threads, { fields: [comments.threadId], references: [threads.id] }),
  author: one(users, { fields: [comments.authorId], references: [users.id] }),
}));

export const reviewsRelations = relations(reviews, ({ one }) => ({
  commit: one(commits, { fields: [reviews.commitId], references: [commits.id] }),
  reviewer: one(users, { fields: [reviews.reviewerId], references: [users.id] }),
  thread: one(threads, { fields: [reviews.threadId], references: [threads.id] }),
}));

export const commitDiffsRelations = relations(commitDiffs, ({ one }) => ({
  run: one(runs, { fields: [commitDiffs.runId], references: [runs.id] }),
}));

export const measurementsRelations = relations(measurements, ({ one }) => ({
  network: one(networks, { fields: [measurements.networkId], references: [networks.id] }),
  commit: one(commits, { fields: [measurements.commitId], references: [commits.id] }),
}));
