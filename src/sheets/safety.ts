/**
 * The safety box and source labels of the sheets, from the caution rows of the tables
 * (tables/cautions.json, through the dose result or the rows themselves). No safety text
 * is written here: every line comes from a caution row with its source.
 */
import { autoRich, type Rich, type SafetyBox } from './model.js';

export type CautionCategory = 'standing' | 'hazard' | 'incompatibility' | 'ppe' | 'exposure-limit' | 'overdose';

export interface CautionLike {
  readonly id: string;
  readonly category: CautionCategory;
  readonly text: string;
  readonly source: string;
  /** The row (or its source) says its content is recalled from memory. */
  readonly recalledFromMemory?: boolean | undefined;
}

export interface SourceLike {
  readonly id: string;
  readonly citation: string;
}

/**
 * "Author (Year). Title. …" → "Author Year". A citation in another form is shortened to
 * its first sentence; an unknown id is returned as it is.
 */
export function shortCitation(citation: string): string {
  const m = /^(.+?) \(((?:\d{4}[a-z]?)|n\.d\.)\)\./.exec(citation);
  if (m) {
    // personal authors "A. B. Name, C. Other, …": the first one, et al. from three on
    const people = m[1]!.split(/,\s+/);
    const personal = people.every((p) => /^(?:[A-Z][a-z]?\.[\s-]?)+\s?\S/.test(p.trim()));
    if (personal && people.length >= 3) return `${people[0]} et al. ${m[2]}`;
    if (personal && people.length === 2) return `${people[0]} and ${people[1]} ${m[2]}`;
    return `${m[1]} ${m[2]}`;
  }
  const first = citation.split('. ')[0] ?? citation;
  return first.length > 80 ? first.slice(0, 77) + '…' : first;
}

/** What a citation of a source whose values are recalled from memory ends with (see citation() in src/dosing). */
export const MEMORY_MARK = '[values recalled from memory; verify]';

/** A function from a source id (or free text such as "common practice") to a printable label. */
export function sourceLabeller(sources: readonly SourceLike[]): (id: string | null | undefined) => string {
  const byId = new Map(sources.map((s) => [s.id, shortCitation(s.citation)]));
  return (id) => {
    if (id === null || id === undefined || id === '') return '';
    if (id === 'input') return 'the request';
    return byId.get(id) ?? id;
  };
}

/**
 * The safety box for a product from its caution rows: hazards (with exposure limits),
 * incompatibilities, protective equipment and overdose signs. Standing notes (local
 * rules govern) are left out: the sheet prints that on every page.
 */
export function safetyBoxFromCautions(input: {
  readonly productName: string;
  readonly productDescription?: string;
  readonly cautions: readonly CautionLike[];
  readonly sources?: readonly SourceLike[];
}): SafetyBox {
  const label = sourceLabeller(input.sources ?? []);
  const of = (...cats: CautionCategory[]) => input.cautions.filter((c) => cats.includes(c.category)).map((c) => autoRich(c.text));
  const none = (what: string): Rich[] => [`No ${what} listed in the tables for this product; see the product's safety data sheet.`];
  const hazards = of('hazard', 'exposure-limit');
  const incompatibilities = of('incompatibility');
  const ppe = of('ppe');
  const overdoseSigns = of('overdose');
  const used = input.cautions.filter((c) => c.category !== 'standing');
  // a source, or a caution row, whose values are recalled from memory says so on the signed sheet
  const memorySources = new Set((input.sources ?? []).filter((x) => x.citation.includes(MEMORY_MARK)).map((x) => x.id));
  const recalled = (c: CautionLike) => memorySources.has(c.source) || c.recalledFromMemory === true;
  const sources = [
    ...new Set(used.map((c) => { const l = label(c.source); return l && recalled(c) ? `${l} (recalled from memory; verify)` : l; })),
  ].filter((s) => s.length > 0);
  return {
    heading: `Safety: ${input.productName.charAt(0).toLowerCase() + input.productName.slice(1)}`,
    product: autoRich(input.productDescription ?? `${input.productName}. Read the product's safety data sheet before handling.`),
    hazards: hazards.length > 0 ? hazards : none('hazards'),
    incompatibilities: incompatibilities.length > 0 ? incompatibilities : none('incompatibilities'),
    ppe: ppe.length > 0 ? ppe : none('protective equipment'),
    overdoseSigns: overdoseSigns.length > 0 ? overdoseSigns : none('overdose signs'),
    ...(sources.length > 0 ? { sources } : {}),
  };
}
