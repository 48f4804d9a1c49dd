#!/usr/bin/env node
// Launcher: registers tsx so the TypeScript CLI runs without a build step.
import { register } from "tsx/esm/api";

register();
const { main } = await import("./main.ts");
main();
