/**
 * The inbox and verdicts that can be changed or withdrawn (app/lib/inbox.ts,
 * app/lib/review/threads.ts): a mention, a verdict on my commit, a reply in a
 * thread I am in, each once and never to its own author; a withdrawn verdict
 * leaves the commit awaiting sign-off; read marks touch only one's own items.
 */
import { afterEach, describe, expect, it } from "vitest";
import { seedDemo } from "@/scripts/seed/index";
import { listInbox, markRead, notifyRunEnded, unreadCount } from "@/app/lib/inbox";
import { commitBadges } from "@/app/lib/review/diffs";
import { addComment, createThread, type Notify } from "@/app/lib/review/threads";
import { myVerdicts } from "@/app/lib/review/sign-off";
import { freshDatabase } from "../helpers/db";
import { dividerHistory } from "../helpers/review-fixtures";

const cleanups: (() => void)[] = [];
afterEach(() => cleanups.splice(0).forEach((f) => f()));
const silent: Notify = async () => undefined;
/** A person's items about the divider's threads (the seeded demo puts runs and its own threads in the inboxes too). */
const talk = (userId: string, db: Parameters<typeof listInbox>[2]) =>
  listInbox(userId, {}, db).items.filter((n) => n.title.includes("width of m2") || n.title.includes("m2 twice"));
function fresh() {
  const t = freshDatabase();
  cleanups.push(t.dispose);
  seedDemo(t.db);
  return t.db;
}

describe("inbox", () => {
  it("a mention, a verdict on my commit and a reply each reach the right person once", async () => {
    const db = fresh();
    const { second } = dividerHistory(db); // committed by u_designer1
    const { thread } = await createThread(
      { commitId: second.id, title: "width of m2", body: "Is 2u right, @reviewer?", authorId: "u_designer2" },
      silent,
      db,
    );
    expect(talk("u_reviewer", db).map((n) => n.kind)).toEqual(["mention"]);
    expect(talk("u_designer2", db)).toEqual([]); // not of one's own comment

    await addComment({ threadId: thread.id, body: "Yes.", verdict: "signed_off", authorId: "u_reviewer" }, silent, db);
    const designer = talk("u_designer1", db);
    expect(designer.map((n) => n.kind)).toEqual(["verdict"]);
    expect(designer[0].title).toMatch(/^Ruth Calder signed off your commit “m2 twice as wide”$/);
    expect(designer[0].href).toMatch(new RegExp(`^/threads/${thread.id}#c_`));
    // the thread's opener hears of the reply
    expect(talk("u_designer2", db).map((n) => n.kind)).toEqual(["reply"]);

    // read marks: one's own only
    const id = designer[0].id;
    expect(markRead("u_reviewer", { ids: [id] }, db)).toBe(0);
    expect(markRead("u_designer1", { ids: [id] }, db)).toBe(1);
    const before = unreadCount("u_designer1", db);
    expect(markRead("u_designer1", { all: true }, db)).toBe(before);
    expect(unreadCount("u_designer1", db)).toBe(0);
    expect(listInbox("u_designer1", { unread: true }, db).items).toEqual([]);
  });

  it("a verdict is changed, then withdrawn; withdrawing twice is refused", async () => {
    const db = fresh();
    const { second } = dividerHistory(db);
    const { thread } = await createThread(
      { commitId: second.id, title: "t", body: "look", authorId: "u_designer1" },
      silent,
      db,
    );
    const say = (verdict: "signed_off" | "rework" | "withdrawn") =>
      addComment({ threadId: thread.id, body: "", verdict, authorId: "u_reviewer" }, silent, db);
    await say("rework");
    expect(commitBadges([second.id], db).get(second.id)!.review).toBe("rework");
    await say("signed_off");
    expect(commitBadges([second.id], db).get(second.id)!.review).toBe("signed_off");
    expect(myVerdicts("u_reviewer", [second.id], db)[second.id]).toBe("signed_off");
    await say("withdrawn");
    expect(commitBadges([second.id], db).get(second.id)!.review).toBe("open");
    expect(myVerdicts("u_reviewer", [second.id], db)[second.id]).toBeNull();
    await expect(say("withdrawn")).rejects.toThrow(/no verdict on this commit to withdraw/);
    expect(talk("u_designer1", db).map((n) => n.title)).toEqual([
      "Ruth Calder withdrew their verdict on your commit “m2 twice as wide”",
      "Ruth Calder signed off your commit “m2 twice as wide”",
      "Ruth Calder sent your commit back for rework “m2 twice as wide”",
    ]);
  });

  it("tells whoever started a run that it finished", () => {
    const db = fresh();
    const { run2 } = dividerHistory(db); // a done run started by u_designer1
    notifyRunEnded(run2, db);
    const [n] = listInbox("u_designer1", {}, db).items.filter((x) => x.href === `/runs/${run2}`);
    expect(n).toMatchObject({ kind: "run_done", href: `/runs/${run2}` });
    expect(n.title).toMatch(/^Your run of Divider \(“m2 twice as wide”\) finished$/);
  });
});
