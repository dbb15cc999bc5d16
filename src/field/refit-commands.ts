/**
 * The exact `lagparity fit` commands that refit a model on the live rows, or
 * on the model's training rows and the live rows together, with the model's
 * link, terms, reference level and attribute. Pure string building: the
 * caller (the CLI) says where the files are and whether the training file
 * has the live file's header.
 */
import type { CompiledModel } from '../model/compile.js';

export interface RefitCommandInputs {
  /** The telemetry file, as the user named it. */
  readonly telemetry: string;
  /** The model file, as the user named it. */
  readonly model: string;
  /** The model's training file (its provenance names it), if found, and whether its header line equals the telemetry's. */
  readonly training: { readonly path: string; readonly sameHeader: boolean } | null;
}

/** Quote a path for a POSIX shell when it needs it. */
export function shellWord(text: string): string {
  return /^[A-Za-z0-9_./:@%+=,-]+$/.test(text) ? text : `'${text.replaceAll("'", "'\\''")}'`;
}

/** `matches/model.json` -> `matches/model-refit.json`. */
function besideModel(model: string, suffix: string): string {
  const stem = model.endsWith('.json') ? model.slice(0, -'.json'.length) : model;
  return `${stem}-${suffix}.json`;
}

export function refitCommands(inputs: RefitCommandInputs, model: CompiledModel): { new_data: string; combined: string | null; note: string } {
  const source = model.source;
  const terms = source.terms.filter((term) => term !== 'intercept');
  const termList = source.terms.includes('intercept') ? terms : [...terms, 'no_intercept'];
  const options = [
    `--link ${source.link}`,
    `--terms ${termList.join(',')}`,
    ...(source.difficulty.kind === 'levels' ? [`--reference ${shellWord(source.difficulty.reference)}`] : []),
    ...(source.attribute === undefined ? [] : [`--attribute ${source.attribute}`]),
  ].join(' ');
  const newData = `lagparity fit ${shellWord(inputs.telemetry)} ${options} --out ${shellWord(besideModel(inputs.model, 'refit'))}`;
  const caveat =
    'Live scales follow latency, so live rows alone separate the latency and scale effects poorly (the refit\'s scale coefficients have wide intervals); the training rows, whose scales were set by design, anchor them.';
  const training = inputs.training;
  if (training === null) {
    return { new_data: newData, combined: null, note: `${caveat} The model's training file ${JSON.stringify(source.provenance.file)} was not found beside the model: put its rows and the live rows in one file with one header line and fit that.` };
  }
  if (!training.sameHeader) {
    return { new_data: newData, combined: null, note: `${caveat} The training file ${training.path} has other columns than the live file: give both the same header line, put them in one file and fit that.` };
  }
  const combinedFile = 'refit-trials.csv';
  // Refuses to replace an existing file of that name.
  const combined = `[ ! -e ${combinedFile} ] && { cat ${shellWord(training.path)}; tail -n +2 ${shellWord(inputs.telemetry)}; } > ${combinedFile} && lagparity fit ${combinedFile} ${options} --out ${shellWord(besideModel(inputs.model, 'refit-combined'))}`;
  return { new_data: newData, combined, note: `${caveat} The combined fit mixes the playtest's conditions with today's play: prefer it unless a patch changed the game since (and keep player ids apart across the two files: the same id is one cluster).` };
}
