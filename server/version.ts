import { readFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const pkgPath = join(dirname(fileURLToPath(import.meta.url)), '..', 'package.json');
/** Keelson's version, from package.json; runs record it. */
export const KEELSON_VERSION: string = (JSON.parse(readFileSync(pkgPath, 'utf8')) as { version: string }).version;
