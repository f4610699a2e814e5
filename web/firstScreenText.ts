// The words of the first screen: the commands that send a frame to an empty monitor, and the
// demo's one line on what is watched.

/** The commands that send a frame to this monitor, for a region name chosen for the day. */
export function sendFrameCommands(origin: string, region: string): string {
  return [
    '# the token: the file "token" in the monitor\'s data folder (--data, ./data by default),',
    '# printed at its first start; or the HELICORD_TOKEN the monitor was started with',
    'TOKEN=$(cat ./data/token)',
    '# a FITS frame, or a JSON frame',
    `curl -H "Authorization: Bearer $TOKEN" -H 'Content-Type: application/fits' \\`,
    `     --data-binary @frame.fits ${origin}/api/regions/${region}/frames`,
    `curl -H "Authorization: Bearer $TOKEN" -H 'Content-Type: application/json' \\`,
    `     --data-binary @frame.json ${origin}/api/regions/${region}/frames`,
    "# or drop files into the region's watched folder (a folder made there makes the region)",
    `mkdir -p ./data/inbox/${region} && cp frame.fits ./data/inbox/${region}/`,
  ].join('\n');
}

/** One line on the demo region: what the user is watching. */
export const DEMO_LINE =
  'Demo: an invented active region over 72 hours of 12-minute frames, played faster than real time. A bipole emerges, its leading ' +
  'spot turns and the polarities shear, so helicity builds up to about −3e42 Mx² and crosses the published thresholds; every number is invented.';
