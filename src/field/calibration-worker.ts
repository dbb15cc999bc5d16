/**
 * The worker thread of `check-field-threads.ts`: runs the calibration fits
 * it claims (`job-threads.ts`). Loaded only by `check-field-threads.ts`,
 * never by the library's entry point.
 */
import { serveJobs } from '../job-threads.js';
import { type CalibrationFit, type CalibrationInputs, type CalibrationJob, runCalibrationFit } from './calibration-fits.js';

serveJobs<CalibrationInputs, CalibrationJob, CalibrationFit>((inputs) => (job) => runCalibrationFit(inputs, job));
