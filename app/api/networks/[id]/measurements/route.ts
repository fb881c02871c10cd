import { z } from "zod";
import { networkAccess, requestActor } from "@/app/lib/access";
import { readBodyBytes } from "@/app/lib/body";
import { DatabaseBusy } from "@/app/lib/db-busy";
import { handle, readJson, RequestError } from "@/app/lib/http";
import { storeCsvInWorker } from "@/app/lib/interactive";
import { getCommit } from "@/app/lib/networks";
import { formatCsvError, MAX_MEASUREMENT_BYTES } from "@/app/lib/review/measurements";
import { listMeasurements, measurementSummary } from "@/app/lib/review/measurement-store";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ id: string }> };

/** GET /api/networks/[id]/measurements (workspace.read): the network's measurements, newest first. */
export function GET(request: Request, ctx: Ctx) {
  return handle(async () => {
    const { network } = networkAccess(await requestActor(request), "workspace.read", (await ctx.params).id);
    return Response.json({ measurements: listMeasurements(network.id) });
  });
}

/**
 * POST /api/networks/[id]/measurements (measurement.write), multipart form:
 * `file` (CSV, at most 10 MB), optional `name`, `note`, `commitId` (the
 * measured revision); or JSON {csv, name?, note?, commitId?} for scripts
 * (the JSON body limit applies). 201 with the stored measurement as listed (no values); 422 naming row and
 * column of the first problem (and `errors`), nothing stored; 413 when too large.
 */
export function POST(request: Request, ctx: Ctx) {
  return handle(async () => {
    const { actor, network } = networkAccess(await requestActor(request), "measurement.write", (await ctx.params).id);
    const upload = (request.headers.get("content-type") ?? "").startsWith("application/json")
      ? await fromJson(request)
      : await fromForm(request);
    if (upload.commitId && getCommit(upload.commitId)?.networkId !== network.id)
      throw new RequestError(422, `commitId: ${upload.commitId} is not a commit of this network`);
    // Parsing (up to 10 MB, a million rows), packing and inserting the values run in the interactive pool, which
    // writes through its own connection: the request thread only waits.
    const { bytes, ...fields } = upload;
    const stored = await storeCsvInWorker(
      bytes,
      { ...fields, networkId: network.id, createdBy: actor.userId },
      request.signal,
    );
    if (!stored.ok) {
      if ("busy" in stored) throw new DatabaseBusy();
      throw new RequestError(422, formatCsvError(stored.errors[0]), {
        errors: stored.errors.map((e) => ({ ...e, text: formatCsvError(e) })),
      });
    }
    const id = stored.id;
    // Its summary, as listed (a million-row upload is not read back and sent as JSON on the request thread).
    return Response.json({ measurement: measurementSummary(id) }, { status: 201 });
  });
}

interface Upload {
  name: string;
  note: string;
  commitId: string | null;
  bytes: Uint8Array;
}

async function fromForm(request: Request): Promise<Upload> {
  let form: FormData;
  // The form is streamed and refused as soon as it crosses the limit (the file plus its fields).
  const bytes = await readBodyBytes(request, MAX_MEASUREMENT_BYTES + 64 * 1024, "the upload");
  try {
    form = await new Response(bytes as Uint8Array<ArrayBuffer>, {
      headers: { "content-type": request.headers.get("content-type") ?? "" },
    }).formData();
  } catch {
    throw new RequestError(
      400,
      "send the CSV as multipart/form-data with a field named file (or JSON with a csv field)",
    );
  }
  const file = form.get("file");
  if (!(file instanceof Blob)) throw new RequestError(400, "file: attach the CSV in a field named file");
  if (file.size > MAX_MEASUREMENT_BYTES)
    throw new RequestError(413, `the file is ${(file.size / 1048576).toFixed(1)} MB; at most 10 MB is accepted`);
  return {
    name: String(form.get("name") ?? "") || (file instanceof File ? file.name : "") || "measurement.csv",
    note: String(form.get("note") ?? ""),
    commitId: String(form.get("commitId") ?? "") || null,
    bytes: new Uint8Array(await file.arrayBuffer()),
  };
}

const JsonUpload = z.object({
  csv: z.string(),
  name: z.string().max(200).optional(),
  note: z.string().max(2000).optional(),
  commitId: z.string().min(1).nullish(),
});

async function fromJson(request: Request): Promise<Upload> {
  const b = await readJson(request, JsonUpload);
  return {
    name: b.name ?? "measurement.csv",
    note: b.note ?? "",
    commitId: b.commitId ?? null,
    bytes: new TextEncoder().encode(b.csv),
  };
}
