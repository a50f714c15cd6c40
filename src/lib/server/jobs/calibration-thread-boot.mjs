// Worker threads start without the TypeScript loader of the worker process (tsx), so register it here first.
import { register } from 'tsx/esm/api';

register();
await import(new URL('./calibration-thread.ts', import.meta.url).href);
