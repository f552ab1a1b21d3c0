// A browser without a page: keeps cookies per origin, follows redirects by hand (also across to the identity
// provider) and posts forms the way a browser does (same Origin). Used by the integration tests and by the
// season simulation (scripts/season/).
export class Browserless {
  cookies = new Map<string, string>();
  constructor(readonly base: string) {}

  cookieHeader(url: string): string {
    // Only send our cookies to our own origin.
    return new URL(url).origin === new URL(this.base).origin
      ? [...this.cookies].map(([k, v]) => `${k}=${v}`).join("; ")
      : "";
  }

  absorb(res: Response, url: string): void {
    if (new URL(url).origin !== new URL(this.base).origin) return;
    for (const line of res.headers.getSetCookie()) {
      const [pair, ...attrs] = line.split(";");
      const eq = pair.indexOf("=");
      const name = pair.slice(0, eq).trim();
      const value = pair.slice(eq + 1).trim();
      const expired = attrs.some((a) => /max-age=0/i.test(a) || /expires=thu, 01 jan 1970/i.test(a.trim()));
      if (expired || value === "") this.cookies.delete(name);
      else this.cookies.set(name, value);
    }
  }

  async request(pathOrUrl: string, init: RequestInit = {}): Promise<Response> {
    const url = pathOrUrl.startsWith("http") ? pathOrUrl : `${this.base}${pathOrUrl}`;
    const headers = new Headers(init.headers);
    const c = this.cookieHeader(url);
    if (c) headers.set("Cookie", c);
    if (init.method && init.method !== "GET" && !headers.has("Origin"))
      headers.set("Origin", new URL(this.base).origin);
    const res = await fetch(url, { ...init, headers, redirect: "manual" });
    this.absorb(res, url);
    return res;
  }

  /** Follows redirects (also across to the identity provider) and returns the last response and its URL. */
  async follow(
    pathOrUrl: string,
    init: RequestInit = {},
    maxHops = 10,
  ): Promise<{ res: Response; url: string; hops: string[] }> {
    let url = pathOrUrl.startsWith("http") ? pathOrUrl : `${this.base}${pathOrUrl}`;
    const hops: string[] = [url];
    let res = await this.request(url, init);
    for (let i = 0; i < maxHops && res.status >= 300 && res.status < 400; i++) {
      url = new URL(res.headers.get("Location")!, url).toString();
      hops.push(url);
      res = await this.request(url);
    }
    return { res, url, hops };
  }

  postForm(
    path: string,
    fields: Record<string, string | string[]>,
    headers: Record<string, string> = {},
  ): Promise<Response> {
    const body = new URLSearchParams();
    for (const [k, v] of Object.entries(fields)) for (const x of ([] as string[]).concat(v)) body.append(k, x);
    return this.request(path, {
      method: "POST",
      body,
      headers: { "Content-Type": "application/x-www-form-urlencoded", ...headers },
    });
  }
}
