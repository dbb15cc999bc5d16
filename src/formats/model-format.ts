/** The format tag of a model file (zod-free, for code that writes model files without loading the schema). */
export const MODEL_FORMAT = 'lagparity/model@1';
