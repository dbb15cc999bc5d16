/**
 * The worker thread of `check-field-threads.ts`: sets the calibration fits up
 * from the live groups and the model's document (as the calling thread does)
 * and runs the fits it claims (`job-threads.ts`). Loaded only by
 * `check-field-threads.ts`, never by the library's entry point.
 */
import { serveJobs } from '../job-threads.js';
import { type CalibrationFit, type CalibrationJob, type CalibrationSource, calibrationInputsFrom, runCalibrationFit } from './calibration-fits.js';

serveJobs<CalibrationSource, CalibrationJob, CalibrationFit>((source) => {
  const inputs = calibrationInputsFrom(source);
  return (job) => runCalibrationFit(inputs, job);
});
