import { data } from "react-router";

export function loader() {
  throw data({ error: "Page not found" }, { status: 404 });
}

export default function NotFound() {
  return null;
}
