// zod in the browser: our Content-Security-Policy forbids eval, so zod runs without its compiled fast path
// (otherwise it probes with Function('') on the first parse and every page load logs a policy violation).
import { z } from 'zod'

z.config({ jitless: true })
