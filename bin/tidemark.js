#!/usr/bin/env node
// Entry point of the `tidemark` command: runs the TypeScript CLI through tsx.
import { register } from "tsx/esm/api";

register();
await import("../dsp/cli/main.ts");
