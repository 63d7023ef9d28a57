#!/usr/bin/env node
// Runs a TypeScript entry point through tsx's loader (Node 20 has no built-in type stripping).
import { register } from 'tsx/esm/api';
import { pathToFileURL } from 'node:url';
import path from 'node:path';

register();
const [entry, ...rest] = process.argv.slice(2);
process.argv = [process.argv[0], entry, ...rest];
await import(pathToFileURL(path.resolve(entry)).href);
