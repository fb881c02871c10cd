/**
 * For tests that run networks through the routes: the accounts fixture on a copy of its database, a caller of its
 * routes, and the run supervisor (imported after the copy is in place, so it opens that database).
 */
import { afterAll, beforeAll } from "vitest";
import { buildAccountsFixture, type AccountsFixture } from "./accounts";
import { apiCaller } from "./api";

export interface RunFixture {
  fixture: AccountsFixture;
  call: ReturnType<typeof apiCaller>;
  supervisor: typeof import("@/app/lib/run-supervisor");
}

export async function runFixture(): Promise<RunFixture> {
  const fixture = buildAccountsFixture();
  fixture.useCopy();
  return { fixture, call: apiCaller(fixture), supervisor: await import("@/app/lib/run-supervisor") };
}

/**
 * `runFixture` for a whole test file: made before its tests, and after them its runs are let finish, the pool is
 * closed and the database copy removed. The fields are there once the tests run.
 */
export function withRunFixture(): RunFixture {
  const t = {} as RunFixture;
  beforeAll(async () => {
    Object.assign(t, await runFixture());
  });
  afterAll(async () => {
    await t.supervisor?.whenIdle();
    await t.supervisor?.closePool();
    t.fixture?.dispose();
  });
  return t;
}

/** A new network in the demo workspace, made by its designer through the route: its id and its first commit's. */
export async function newNetwork(
  t: RunFixture,
  name: string,
  text: string,
): Promise<{ network: string; commit: string }> {
  const made = await t.call(
    "designer",
    "w/[slug]/networks/route",
    "POST",
    "/api/w/lm64-edge-row/networks",
    { slug: "lm64-edge-row" },
    { name, text, message: "first" },
  );
  if (made.status !== 201) throw new Error(`the network was not made: ${made.status} ${JSON.stringify(made.json)}`);
  const { network, commit } = made.json as { network: { id: string }; commit: { id: string } };
  return { network: network.id, commit: commit.id };
}
