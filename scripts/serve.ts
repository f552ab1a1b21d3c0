// The production server: `tsx scripts/serve.ts build/server/index.js` (`npm start`; scripts/stack.ts for the
// demo and the tests). Express serves the built assets and hands everything else to React Router. This file is
// the one place that sets the security headers and the caching rule of every response, and resolves the client
// address (TRUST_PROXY) that the app reads through app/http/client.server.ts.
import crypto from "node:crypto";
import path from "node:path";
import { pathToFileURL } from "node:url";
import { createRequestHandler } from "@react-router/express";
import compression from "compression";
import express from "express";
import helmet from "helmet";
import morgan from "morgan";
import onHeaders from "on-headers";
import type { ServerBuild } from "react-router";
import { http, oidc } from "../app/config.server";
import { CLIENT_ADDRESS_HEADER } from "../app/http/client.server";

const buildPath = path.resolve(process.argv[2] ?? "build/server/index.js");
const build = (await import(pathToFileURL(buildPath).href)) as ServerBuild;
const clientDir = path.join(path.dirname(buildPath), "../client");
const port = Number(process.env.PORT ?? 3000);

const app = express();
app.disable("x-powered-by");
try {
  // Express (proxy-addr) then takes req.ip and req.protocol from X-Forwarded-* only when the socket's peer is
  // one of these proxies; otherwise req.ip is the peer itself.
  app.set("trust proxy", http.trustProxy.length ? http.trustProxy : false);
} catch (e) {
  throw new Error(`TRUST_PROXY: ${e instanceof Error ? e.message : String(e)}`);
}

// A fresh nonce per response for the inline scripts React Router writes into the document (hydration data,
// module imports, scroll restoration); entry.server.tsx puts it on them through the load context.
app.use((_req, res, next) => {
  res.locals.cspNonce = crypto.randomBytes(16).toString("base64");
  next();
});
const nonce = (_req: unknown, res: unknown) => `'nonce-${(res as express.Response).locals.cspNonce}'`;
app.use(
  helmet({
    contentSecurityPolicy: {
      useDefaults: false,
      directives: {
        defaultSrc: ["'self'"],
        scriptSrc: ["'self'", nonce],
        scriptSrcAttr: ["'none'"],
        // Stylesheets and <style> elements: our own (Tailwind's built CSS, the bundled Work Sans) or nonced.
        styleSrc: ["'self'", nonce],
        // Style attributes: React writes `style="…"` into the server HTML (recharts positions its SVG with
        // them, bars and gauges set widths); a policy without this would leave charts unsized until hydration.
        // Attributes cannot run script, and React escapes their values.
        styleSrcAttr: ["'unsafe-inline'"],
        imgSrc: ["'self'"],
        fontSrc: ["'self'"],
        connectSrc: ["'self'"],
        manifestSrc: ["'self'"],
        objectSrc: ["'none'"],
        baseUri: ["'none'"],
        // Sign-in is a form that ends at the identity provider (browsers check redirects after a form too).
        formAction: ["'self'", new URL(oidc.issuer).origin],
        frameAncestors: ["'none'"],
        ...(http.hsts ? { upgradeInsecureRequests: [] } : {}),
      },
    },
    frameguard: { action: "deny" },
    // "same-origin": no Referer ever leaves the site (URLs name workers), while our own form posts keep an
    // Origin header (under "no-referrer" browsers send `Origin: null`, which the same-origin check refuses).
    referrerPolicy: { policy: "same-origin" },
    strictTransportSecurity: http.hsts ? { maxAge: 31_536_000, includeSubDomains: true } : false,
  }),
);

app.use(compression());
app.use("/assets", express.static(path.join(clientDir, "assets"), { immutable: true, maxAge: "1y" }));
app.use(express.static(clientDir, { maxAge: "1h" }));
app.use(morgan("tiny"));

// Everything React Router answers (pages, `.data`, resource routes, the API) is personal or depends on who
// asks: never stored by a browser or a proxy, whatever a route set itself.
app.use((req, res, next) => {
  onHeaders(res, () => {
    res.setHeader("Cache-Control", "no-store");
  });
  req.headers[CLIENT_ADDRESS_HEADER] = (req.ip ?? req.socket.remoteAddress ?? "").replace(/^::ffff:/, "");
  next();
});
app.all(
  "*",
  createRequestHandler({
    build,
    mode: process.env.NODE_ENV,
    getLoadContext: (_req, res) => ({ cspNonce: res.locals.cspNonce as string }),
  }),
);

const server = process.env.HOST ? app.listen(port, process.env.HOST) : app.listen(port);
server.on("listening", () => console.log(`[limberly] http://localhost:${port}`));
for (const signal of ["SIGTERM", "SIGINT"] as const) process.once(signal, () => server.close(console.error));
