// Worker threads start without the TypeScript loader the main thread has (tsx, or vite inside
// vitest), so register tsx's ESM hooks here and then load the TypeScript reader; works in both.
import { register } from 'tsx/esm/api';

register();
await import(new URL('./stream-reader.ts', import.meta.url).href);
