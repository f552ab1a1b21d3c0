import type { Role } from "~/auth/permissions";

export interface NavItem {
  to: string;
  label: string;
}
export type NavByRole = Partial<Record<Role, NavItem[]>>;
