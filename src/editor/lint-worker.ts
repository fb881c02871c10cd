/**
 * The lint worker: elaborates texts off the main thread. One request at a
 * time, answered in order (see lint-protocol.ts).
 */
import { answerLintRequest, type LintRequest, type LintReply } from "./lint-protocol";

const scope = globalThis as unknown as {
  addEventListener(type: "message", listener: (e: MessageEvent<LintRequest>) => void): void;
  postMessage(message: LintReply): void;
};

scope.addEventListener("message", (e) => {
  scope.postMessage(answerLintRequest(e.data));
});
