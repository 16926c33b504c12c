import type { WorkshopRole } from "../../shared/workshop/roles";

// An invented scenario: a small club of builders sharing one garage bench.
// The addresses use the reserved .example domain, so no mail can reach a real person.
export const DEMO_PASSWORD = "bench-demo-2026";

export const DEMO_WORKSHOP = { name: "Larkfield Garage Cockpit Club", slug: "larkfield-garage" };

export const DEMO_PEOPLE: { name: string; email: string; role: WorkshopRole }[] = [
  { name: "Rowan Pike", email: "demo@panelproof.example", role: "owner" },
  { name: "Ines Carrow", email: "builder@panelproof.example", role: "builder" },
  { name: "Theo Marsh", email: "viewer@panelproof.example", role: "viewer" },
];
