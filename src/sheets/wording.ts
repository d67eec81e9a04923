/**
 * Wording for the sheets: the domain's texts (flag messages, notes, reasons) are written for
 * the API and name request and profile fields by their JSON paths ("give product.purity",
 * "targets.residualByOxidant.sodium-hypochlorite"); on a sheet the operator reads them in
 * words. Also the figures of an exact fit: a standard error that is floating-point noise
 * (1e-16 against a value of 1) is printed as 0, never in e-notation.
 *
 * Pure text functions, no pdfkit; `autoRich` (model.ts) runs every free text through `inWords`.
 */

export { NEGLIGIBLE_RELATIVE, isNegligible } from '../core/negligible.js';
import { isNegligible } from '../core/negligible.js';

/** "sodium-hypochlorite" → "sodium hypochlorite" (the table ids are the product names, hyphenated). */
export function idInWords(id: string): string {
  return id.replace(/-/g, ' ');
}

/** "residualOxidantMax" → "residual oxidant max". */
function camelInWords(name: string): string {
  return name.replace(/([a-z0-9])([A-Z])/g, '$1 $2').toLowerCase();
}

/** Request and profile fields as an operator says them, with their article. */
const FIELD_WORDS: Readonly<Record<string, string>> = {
  'sample.alkalinity': 'the alkalinity reading',
  'sample.bromide': 'a bromide reading',
  'sample.toc': 'a TOC reading',
  'sample.temperatureC': 'the sample temperature in °C',
  'sample.temperature': 'the sample temperature',
  'sample.dissolvedOxygen': 'a dissolved oxygen reading',
  'product.strength': 'the product strength',
  'product.density': 'the product density',
  'product.purity': 'the product purity',
  'batch.temperatureC': 'the batch tank temperature',
  'batch.volume': 'the batch volume',
  'options.ammoniaRatio': 'the ammonia ratio choice',
  'options.potentialOverrides': 'the site potentials',
  'options.units': 'the units choice',
  'targets.residualOxidantMax': 'the largest residual allowed among the targets',
  'targets.residualOxidant': 'the residual required among the targets',
  'targets.residualByOxidant': "the plant profile's residual targets by oxidant",
  'targets.residual': "the plant profile's general residual target",
  targetResidual: 'a target residual',
  backgroundDemand: 'a background demand',
  stockStrengthGPerL: 'the measured stock strength',
  stockStrength: 'the stock strength',
  contactTime: 'the contact time',
  contactVolume: 'the contact volume',
};

const FIELD_PREFIXES = 'sample|product|batch|options|targets|stock|pump|flow|plant';

/**
 * A domain text with the JSON paths of request and profile fields put in words:
 * "Give product.purity from the certificate" → "Give the product purity from the certificate";
 * "from the plant profile: targets.residualByOxidant.sodium-hypochlorite, set for sodium-hypochlorite"
 * → "from the plant profile's residual target for sodium hypochlorite". Also "1.1 ± 9e-17" (a
 * standard error that is rounding noise of an exact fit) → "1.1 ± 0".
 */
export function inWords(text: string): string {
  if (!/[a-z][.][a-zA-Z]|[a-z][A-Z]|±/.test(text)) return text;
  let out = text;
  // the profile entry a residual came from: "from the plant profile: <entry>, set for <id>"
  out = out.replace(
    /\b(from )?the plant profile: targets\.residualByOxidant\.([a-z0-9-]+)(?:, set for ((?:[a-z0-9-]+(?:, | and )?)+?)(?=[).;]|, on the same basis|$))?/g,
    (_m, from: string | undefined, id: string, list: string | undefined) =>
      `${from ?? ''}the plant profile's residual target for ${idInWords(id)}${list !== undefined && list !== id ? `, set for ${idInWords(list)}` : ''}`,
  );
  out = out.replace(/\b(from )?the plant profile: targets\.residual\b(?:, the plant's residual target\b)?/g, (_m, from: string | undefined) => `${from ?? ''}the plant profile's general residual target`);
  out = out.replace(/\badd targets\.residualByOxidant\.([a-z0-9-]+) to the plant profile\b/g, (_m, id: string) => `add a residual target for ${idInWords(id)} to the plant profile`);
  out = out.replace(/\btargets\.residualByOxidant\.([a-z0-9-]+)/g, (_m, id: string) => `the plant profile's residual target for ${idInWords(id)}`);
  out = out.replace(/\btargets\.residualByOxidant gives\b/g, "the plant profile's residual targets by oxidant give");
  // JSON pointers into the options (options.potentialOverrides/0 → the site potential 1)
  out = out.replace(/\boptions\.potentialOverrides\/(\d+)/g, (_m, i: string) => `site potential ${Number(i) + 1} of the request`);
  // known fields, longest first so that targets.residualOxidantMax is not read as targets.residualOxidant
  for (const key of Object.keys(FIELD_WORDS).sort((a, b) => b.length - a.length)) {
    if (!out.includes(key)) continue;
    const words = FIELD_WORDS[key]!;
    const re = new RegExp(`(^|[^A-Za-z0-9.])(the |a |an )?${key.replace(/\./g, '\\.')}(?![A-Za-z0-9])`, 'g');
    out = out.replace(re, (_m, lead: string, article: string | undefined) => `${lead}${article ? words.replace(/^(the|a|an) /, article) : words}`);
  }
  // any other field path of the request or profile: "product.fooBar" → "the product foo bar"
  out = out.replace(new RegExp(`\\b(${FIELD_PREFIXES})\\.([a-z][A-Za-z]+)(?:\\.([a-z0-9-]+))?\\b`, 'g'), (_m, head: string, field: string, id: string | undefined) =>
    `the ${head} ${camelInWords(field)}${id ? ` for ${idInWords(id)}` : ''}`,
  );
  out = plusMinusNoise(out);
  return out;
}

const NUM = String.raw`[−-]?\d+(?:[.,]\d+)?(?:[eE][+\-−]?\d+)?`;

/** "1.1 ± 9e-17" → "1.1 ± 0" where the ± term is rounding noise against the figure before it. */
function plusMinusNoise(text: string): string {
  if (!text.includes('±')) return text;
  return text.replace(new RegExp(`(${NUM})(\\s*(?:mg/L\\s*)?±\\s*)(${NUM})`, 'g'), (m, value: string, sep: string, se: string) => {
    const v = Number(value.replace('−', '-').replace(',', '.'));
    const s = Number(se.replace('−', '-').replace(',', '.'));
    return /[eE]/.test(se) && isNegligible(s, v) ? `${value}${sep}0` : m;
  });
}
