import type { Role } from "@/db/schema";

/**
 * The password of every demo account: documented in the README ("Demo
 * accounts") and shown on /signin in demo mode (RUNNEL_DEMO=1). It is the only
 * credential in the repository; real accounts choose their own.
 */
export const DEMO_PASSWORD = "larkspur-demo";

/**
 * The invented demo scenario (README.md, Quick start): a fictitious team, "Larkspur
 * Microsystems", designing the LM-64 edge row. Every name and number here is
 * made up for the demo.
 */
export const DEMO_USERS: { id: string; email: string; name: string; role: Role }[] = [
  { id: "u_owner", email: "owner@larkspur.example", name: "Ada Marlow", role: "owner" },
  { id: "u_designer1", email: "designer@larkspur.example", name: "Teo Brandt", role: "designer" },
  { id: "u_designer2", email: "designer2@larkspur.example", name: "Mina Osei", role: "designer" },
  { id: "u_reviewer", email: "reviewer@larkspur.example", name: "Ruth Calder", role: "reviewer" },
  { id: "u_viewer", email: "viewer@larkspur.example", name: "Jon Pike", role: "viewer" },
];

export const DEMO_WORKSPACES = [
  {
    id: "ws_lm64",
    slug: "lm64-edge-row",
    name: "LM-64 edge row",
    description: "64-tap smoothing row for the low-power vision sensor, with its bias-current divider and mirror bank.",
  },
];
