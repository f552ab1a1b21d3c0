// INVENTED demo personas for the invented firm "Harrow & Vale Fabrication". No real people.
// Used by the seed, by the sign-in page outside production, and by the tests.
import type { Role } from "./permissions";

export interface DemoPersona {
  email: string;
  displayName: string;
  role: Role;
  title: string;
}

export const DEMO_PERSONAS: DemoPersona[] = [
  {
    email: "morwenna.pike@harrowvale.example",
    displayName: "Morwenna Pike",
    role: "assessor",
    title: "Occupational therapist, all sites",
  },
  {
    email: "rhea.lindqvist@harrowvale.example",
    displayName: "Rhea Lindqvist",
    role: "assessor",
    title: "Occupational therapist, second reviewer",
  },
  {
    email: "tobias.renn@harrowvale.example",
    displayName: "Tobias Renn",
    role: "coordinator",
    title: "Training coordinator",
  },
  {
    email: "ines.calloway@harrowvale.example",
    displayName: "Ines Calloway",
    role: "trainer",
    title: "Device trainer, North Yard",
  },
  {
    email: "declan.hartley@harrowvale.example",
    displayName: "Declan Hartley",
    role: "manager",
    title: "Manager, North Yard: Cable Harness and Final Assembly",
  },
  {
    email: "amara.quist@harrowvale.example",
    displayName: "Amara Quist",
    role: "worker",
    title: "Worker, North Yard Cable Harness",
  },
  { email: "sam.okafor@harrowvale.example", displayName: "Sam Okafor", role: "admin", title: "System owner" },
];
