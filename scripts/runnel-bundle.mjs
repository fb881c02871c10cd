#!/usr/bin/env node
/**
 * `npm run runnel -- …`: runs the command line (scripts/runnel.ts) from its
 * bundle, .build/runnel.mjs, rebuilt first when any of its sources changed.
 */
import { pathToFileURL } from "node:url";
import { freshBundle } from "./lib/bundle.mjs";

const file = await freshBundle("scripts/runnel.ts", ".build/runnel.mjs");
const { cli } = await import(pathToFileURL(file).href);
cli(process.argv.slice(2));
