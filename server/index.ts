import { boot } from './boot';

const { app, config } = await boot();
const server = app.listen(config.PORT, () => {
  const addr = server.address();
  const port = typeof addr === 'object' && addr ? addr.port : config.PORT;
  console.log(`Keelson is serving on http://localhost:${port} (database ${config.KEELSON_DB})`);
});
