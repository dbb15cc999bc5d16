/**
 * The worker thread of `fit-model-threads.ts`: runs the refits it claims
 * (`job-threads.ts`), building the full design from the shared context once,
 * should one need it.
 * Loaded only by `fit-model-threads.ts`, never by the library's entry point.
 */
import { serveJobs } from '../job-threads.js';
import type { TermDesign } from './design.js';
import { type RefitContext, type RefitJob, type RefitResult, fullDesign, runRefit } from './refit-jobs.js';

serveJobs<RefitContext, RefitJob, RefitResult>((context) => {
  let design: TermDesign | undefined;
  const lazily = () => (design ??= fullDesign(context));
  return (job) => runRefit(context, job, lazily);
});
