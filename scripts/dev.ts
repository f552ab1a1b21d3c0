// `npm run dev`: like the demo, but the app runs under Vite with hot reload.
export {};

process.argv.push("--dev");
await import("./demo");
