import { ROLE_HOMES, ROLE_PRECEDENCE, type Role } from "./permissions";

export function homeFor(roles: Role[]): string {
  const first = ROLE_PRECEDENCE.find((r) => roles.includes(r));
  return first ? ROLE_HOMES[first] : "/auth/not-provisioned";
}
