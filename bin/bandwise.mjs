#!/usr/bin/env node
// The bandwise command: loads the TypeScript CLI through tsx's loader.
import { register } from 'tsx/esm/api';

register();
await import('../src/cli/main.ts');
