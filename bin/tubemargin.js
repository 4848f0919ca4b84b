#!/usr/bin/env node
// Launcher: the compiled CLI lives in dist/ (built by `npm ci` through the prepare script).
import { runFromProcess } from '../dist/cli/main.js';

runFromProcess();
