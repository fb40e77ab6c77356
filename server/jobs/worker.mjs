// Worker-thread entry for the deep-check pool. Worker threads start with no TypeScript loader,
// so register tsx's ESM hooks here (tsx/esm/api `register`) before importing the TS task module.
// This works the same when the server runs under `tsx`, `node --import tsx` or vitest.
import { register } from 'tsx/esm/api';

register();
const mod = await import('./tasks.ts');

export default mod.default;
