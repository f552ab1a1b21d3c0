import { allocation } from "./allocation";
import { assessment } from "./assessment";
import { forecast } from "./forecast";
import { portals } from "./portals";
import { readiness } from "./readiness";
import type { Area } from "./types";

/** The product's areas, in navigation order: the only list of them. */
export const AREAS: Area[] = [assessment, forecast, allocation, readiness, portals];
