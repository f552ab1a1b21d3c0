import { isProduction } from "~/config.server";
import { DEMO_PERSONAS, type DemoPersona } from "./demo-personas";

// The invented demo personas are offered on the sign-in page only outside production.
export function demoPersonas(): DemoPersona[] {
  return isProduction ? [] : DEMO_PERSONAS;
}
