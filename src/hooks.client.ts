import { z } from 'zod';

// zod probes for eval with Function(''); the content security policy forbids eval, and the probe is reported as a violation.
z.config({ jitless: true });
