// The bundle's entry (web/build.mjs): starts the dashboard. Every other module only defines
// things; this is the one place that acts on load.

import { startPage } from './startPage.js';

startPage();
