import { cookies } from "next/headers";
import { NOTATION_COOKIE, parseNotation, type Notation } from "./format";

/** The notation the reader chose (cookie `runnel-notation`), for server-rendered values. */
export async function requestNotation(): Promise<Notation> {
  return parseNotation((await cookies()).get(NOTATION_COOKIE)?.value);
}
