import { createFeaturizer, type FeaturizerOptions } from '../features/hashed-featurizer.js';
import { IdfTable, type IdfTableJson } from '../features/idf-table.js';
import { LogisticModel, type LogisticModelJson } from './logistic-model.js';

/** The format version {@link modelExport} writes. */
export const MODEL_EXPORT_VERSION = 1;

/** The featuriser settings a model needs to score, every one spelled out. */
export type FeaturizerSettings = Required<FeaturizerOptions>;

/**
 * A model version as a file (`model.json`), format version 1: everything
 * needed to score a text the way the version scored it, and nothing of the
 * texts it learned from.
 *
 * - `featurizer`: the hashed featuriser's settings (MurmurHash3 x86 32-bit
 *   with the featuriser's fixed seeds, `hashBits` buckets, word n-grams up
 *   to `maxWordNgram`, character n-grams of `charNgrams` sizes);
 * - `idf`: the document frequencies of the pool the version was trained on,
 *   sparse (buckets with a non-zero count only), for tf-idf;
 * - `classifier`: the multinomial logistic model (`cribra.logistic-model`),
 *   sparse too: only the buckets that occurred in its training rows carry
 *   weights (`features`, ascending), one weight row per trained category,
 *   one intercept each, and the solver's summary (`training`).
 */
export interface ModelExportJson {
  type: 'cribra.model-export';
  version: 1;
  /** Where the model comes from. */
  source: { deskId: number; deskName: string; version: number; publishedAt: string | null };
  exportedAt: string;
  /** The desk's categories, in its order (the classifier's too). */
  categories: string[];
  featurizer: FeaturizerSettings;
  idf: IdfTableJson;
  classifier: LogisticModelJson;
}

/** A model file read back and checked. */
export interface ModelExport {
  json: ModelExportJson;
  classifier: LogisticModel;
  idf: IdfTable;
  featurizer: FeaturizerSettings;
}

/** The featuriser settings with every default filled in. */
export function featurizerSettings(options: FeaturizerOptions = {}): FeaturizerSettings {
  const o = createFeaturizer(options).options;
  return { hashBits: o.hashBits, maxWordNgram: o.maxWordNgram, charNgrams: o.charNgrams };
}

/** True when two featurisers hash every text to the same counts. */
export function sameFeaturizer(a: FeaturizerOptions, b: FeaturizerOptions): boolean {
  return JSON.stringify(featurizerSettings(a)) === JSON.stringify(featurizerSettings(b));
}

/** Writes a model file (see {@link ModelExportJson}). */
export function modelExport(
  source: ModelExportJson['source'],
  classifier: LogisticModel,
  idf: IdfTable,
  featurizer: FeaturizerOptions,
  exportedAt: Date = new Date(),
): ModelExportJson {
  const settings = featurizerSettings(featurizer);
  if (classifier.hashBits !== settings.hashBits || idf.hashBits !== settings.hashBits)
    throw new RangeError(
      `hash sizes differ: classifier ${classifier.hashBits}, idf ${idf.hashBits}, featuriser ${settings.hashBits} bits`,
    );
  return {
    type: 'cribra.model-export',
    version: MODEL_EXPORT_VERSION,
    source,
    exportedAt: exportedAt.toISOString(),
    categories: [...classifier.categories],
    featurizer: settings,
    idf: idf.toJSON(),
    classifier: classifier.toJSON(),
  };
}

/**
 * Reads a model file written by {@link modelExport}; throws TypeError or
 * RangeError naming what is wrong (another type, a newer format version,
 * inconsistent sizes).
 */
export function readModelExport(input: unknown): ModelExport {
  if (typeof input !== 'object' || input === null || Array.isArray(input))
    throw new TypeError('a model file is a JSON object');
  const json = input as { [K in keyof ModelExportJson]?: unknown };
  if (json.type !== 'cribra.model-export')
    throw new TypeError(`not a model file: type ${JSON.stringify(json.type)} (expected "cribra.model-export")`);
  if (json.version !== MODEL_EXPORT_VERSION)
    throw new RangeError(
      `model file format version ${JSON.stringify(json.version)} is not supported (this build reads ${MODEL_EXPORT_VERSION})`,
    );
  if (typeof json.featurizer !== 'object' || json.featurizer === null)
    throw new TypeError('featurizer: expected the featuriser settings');
  const featurizer = featurizerSettings(json.featurizer);
  const classifier = LogisticModel.fromJSON(json.classifier as LogisticModelJson);
  const idf = IdfTable.fromJSON(json.idf as IdfTableJson);
  if (classifier.hashBits !== featurizer.hashBits || idf.hashBits !== featurizer.hashBits)
    throw new RangeError(
      `hash sizes differ: classifier ${classifier.hashBits}, idf ${idf.hashBits}, featuriser ${featurizer.hashBits} bits`,
    );
  if (classifier.link !== 'softmax') throw new RangeError('only multinomial (softmax) models can be transferred');
  return { json: input as ModelExportJson, classifier, idf, featurizer };
}

/**
 * The same classifier over another list of categories, matched by name: a
 * category of `categories` the model did not train gets probability 0
 * (`untrained`); a trained category that `categories` lacks is left out
 * (`dropped`), and the softmax renormalises over the rest.
 *
 * @throws RangeError when fewer than two trained categories remain.
 */
export function remapCategories(
  model: LogisticModel,
  categories: readonly string[],
): { model: LogisticModel; untrained: string[]; dropped: string[] } {
  const oldK = model.trained.length;
  const kept: Array<{ old: number; position: number }> = [];
  const dropped: string[] = [];
  model.trained.forEach((p, c) => {
    const position = categories.indexOf(model.categories[p]);
    if (position < 0) dropped.push(model.categories[p]);
    else kept.push({ old: c, position });
  });
  kept.sort((a, b) => a.position - b.position);
  if (kept.length < 2)
    throw new RangeError(
      `the model and the categories ${JSON.stringify(categories)} share ${kept.length} trained categor${kept.length === 1 ? 'y' : 'ies'}; at least 2 are needed`,
    );
  const k = kept.length;
  const m = model.features.length;
  const weights = new Float64Array(m * k);
  for (let j = 0; j < m; j++) for (let a = 0; a < k; a++) weights[j * k + a] = model.weights[j * oldK + kept[a].old];
  const remapped = new LogisticModel(
    [...categories],
    kept.map((x) => x.position),
    model.hashBits,
    Int32Array.from(model.features),
    weights,
    Float64Array.from(kept, (x) => model.biases[x.old]),
    { ...model.training },
    model.link,
  );
  const trainedNames = new Set(kept.map((x) => categories[x.position]));
  return { model: remapped, untrained: categories.filter((c) => !trainedNames.has(c)), dropped };
}
