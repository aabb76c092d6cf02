#!/usr/bin/env node
// Thin launcher for the bundled CLI (built by `npm install` through the `prepare` script).
require('../dist/cli.js').main();
