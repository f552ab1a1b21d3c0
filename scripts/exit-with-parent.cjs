// Preloaded into the app server started by scripts/stack.ts: if the process that started it dies
// (a killed test run, a closed terminal), the server ends too instead of holding its port.
const parent = process.ppid;
setInterval(() => {
  try {
    process.kill(parent, 0);
  } catch {
    process.exit(0);
  }
  if (process.ppid !== parent) process.exit(0);
}, 1000).unref();
