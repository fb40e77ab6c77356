/**
 * `npm start`: builds the web export when it is missing or older than the client sources,
 * then starts the server (which migrates, seeds an empty database and serves app + API on one port).
 */
import { buildWeb, webBuildIsStale } from './web-build';

export { webBuildIsStale };

if (webBuildIsStale()) {
  console.log('Building the web app (expo export)…');
  const status = buildWeb();
  if (status !== 0) {
    console.error('The web build failed; see the messages above.');
    process.exit(status);
  }
}
await import('../server/index');
