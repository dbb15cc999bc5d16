/**
 * The worker thread of `fit-model-threads.ts`: builds the full design once
 * from the shared context, then runs the refits it claims (`job-threads.ts`).
 * Loaded only by `fit-model-threads.ts`, never by the library's entry point.
 */
import { serveJobs } from '../job-threads.js';
import { type RefitContext, type RefitJob, type RefitResult, fullDesign, runRefit } from './refit-jobs.js';

serveJobs<RefitContext, RefitJob, RefitResult>((context) => {
  const design = fullDesign(context);
  return (job) => runRefit(context, job, design);
});
