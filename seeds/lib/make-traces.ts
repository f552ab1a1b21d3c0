// Writes the example trace files and the demo roster in seeds/traces/ (INVENTED data, for the demo and
// the e2e test). Deterministic: seeded PRNG, fixed formatting; re-running gives byte-identical files.
// Run: npx tsx seeds/lib/make-traces.ts
import fs from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { mulberry32 } from "./prng";

const out = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "../traces");
const rand = mulberry32(7_2026);
const normal = () => Math.sqrt(-2 * Math.log(1 - rand())) * Math.cos(2 * Math.PI * rand());
const f = (v: number, d = 3) => v.toFixed(d);
const write = (name: string, lines: string[]) => fs.writeFileSync(path.join(out, name), `${lines.join("\n")}\n`);

fs.mkdirSync(out, { recursive: true });

// Postural sway: 30 s at 100 Hz, centre of pressure (mm) as a damped random walk.
{
  const lines = ["t,x,y"];
  let x = 0,
    y = 0;
  for (let i = 0; i < 3000; i++) {
    x = 0.999 * x + 0.12 * normal();
    y = 0.999 * y + 0.1 * normal();
    lines.push(`${f(i / 100, 2)},${f(x)},${f(y)}`);
  }
  write("sway.csv", lines);
  // The same recording with a timestamp going backwards (row 502 of the file).
  const bad = [...lines];
  bad[501] = `4.90,${bad[501].split(",").slice(1).join(",")}`;
  write("sway-bad-time.csv", bad);
}

// Foot tracking: 30 s at 100 Hz; a sum-of-sines target and a cursor following 0.2 s behind with noise.
{
  const lines = ["t,target,cursor"];
  const target = (t: number) => 40 * Math.sin(2 * Math.PI * 0.15 * t) + 15 * Math.sin(2 * Math.PI * 0.37 * t + 1);
  for (let i = 0; i < 3000; i++) {
    const t = i / 100;
    lines.push(`${f(t, 2)},${f(target(t))},${f(target(t - 0.2) + 2 * normal())}`);
  }
  write("tracking.csv", lines);
  write(
    "tracking-missing-column.csv",
    lines.map((l) => l.split(",").slice(0, 2).join(",")),
  );
}

// Glove: 10 s at 100 Hz, 22 joint angles (degrees) from three synergies plus sensor noise.
{
  const joints = 22;
  const loadings = Array.from({ length: 3 }, () => Array.from({ length: joints }, () => normal()));
  const header = ["t", ...Array.from({ length: joints }, (_, j) => `j${String(j + 1).padStart(2, "0")}`)];
  const lines = [header.join(",")];
  const s = [0, 0, 0];
  for (let i = 0; i < 1000; i++) {
    for (let k = 0; k < 3; k++) s[k] = 0.98 * s[k] + [0.5, 0.45, 0.4][k] * normal();
    const row = Array.from(
      { length: joints },
      (_, j) => 30 + s[0] * loadings[0][j] + s[1] * loadings[1][j] + s[2] * loadings[2][j] + 1.6 * normal(),
    );
    lines.push([f(i / 100, 2), ...row.map((v) => f(v, 2))].join(","));
  }
  write("glove.csv", lines);
  write("glove-too-short.csv", lines.slice(0, 11));
}

// Timing: 30 cues every 600 ms; responses about 30 ms early with 25 ms jitter; cue 17 missed.
{
  const lines = ["cue_ms,onset_ms"];
  for (let i = 0; i < 30; i++) {
    const cue = 1000 + 600 * i;
    const onset = i === 16 ? "" : f(cue - 30 + 25 * normal(), 1);
    lines.push(`${cue},${onset}`);
  }
  write("timing.csv", lines);
}

// Force grading: 12 trials at target levels 10–40 N, produced with a slight overshoot and noise.
{
  const lines = ["target,produced"];
  const targets = [10, 20, 30, 40, 15, 25, 35, 10, 20, 30, 40, 25];
  for (const t of targets) lines.push(`${t},${f(1.05 * t + 1.5 * normal(), 2)}`);
  write("force.csv", lines);
}

// Roster: new workers, one correction of an existing worker, and five bad rows (named in the preview).
{
  const lines = [
    "Employee number,First name,Last name,E-mail,Site,Department",
    "HV-90001,Ada,Merriweather,ada.merriweather@harrowvale.example,NY,CH",
    "HV-90002,Bram,Oakhurst,bram.oakhurst@harrowvale.example,North Yard,Final Assembly",
    "HV-90003,Cleo,Penhallow,,RS,KT",
    "HV-90004,Dmitri,Quayle,dmitri.quayle@harrowvale.example,EG,Inspection",
    "HV-90005,Esme,Rowntree,esme.rowntree@harrowvale.example,Riverside,PP",
    ",Finn,Sorley,finn.sorley@harrowvale.example,NY,CH",
    "HV-90007,Gwen,Tarrant,gwen.tarrant@@harrowvale,NY,KT",
    "HV-90008,Hugo,Upton,hugo.upton@harrowvale.example,Westmoor,CH",
    "HV-90009,Iris,Vell,iris.vell@harrowvale.example,EG,Welding",
    "HV-90001,Ada,Merriweather,ada.m@harrowvale.example,NY,CH",
    "HV-00002,Corrected,Name,,NY,KT",
  ];
  write("roster-demo.csv", lines);
}
console.log(`wrote ${fs.readdirSync(out).length} files to ${out}`);
