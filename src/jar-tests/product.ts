/**
 * What the jar-test module needs to know about an oxidant product. The HTTP layer
 * fills this from the oxidant products table (tables/oxidants.json) and the
 * product the plant has on hand; nothing here reads a table.
 */

/** Solubility of a solid (or a dissolved gas) in water, on the dose basis. */
export interface Solubility {
  /** g/L on the dose basis (e.g. g KMnO4 per L of solution). */
  readonly gPerL: number;
  readonly temperatureC?: number;
  /** Source id (resolves in tables/sources.json). */
  readonly source?: string;
  readonly note?: string;
}

/**
 * How a stock solution is made from the product.
 * - solid: weigh the product (purity = mass fraction of the dose basis in the product as
 *   weighed: KMnO4 assay for permanganate, available-chlorine fraction for calcium hypochlorite).
 * - trade-solution: dilute a measured volume of the trade solution (strength in g/L on the dose
 *   basis, e.g. 125 g/L available chlorine for a 12.5 % trade hypochlorite).
 * - generated: the stock is made on the day and its strength must be measured and given:
 *   ozone water from an ozone generator, chlorine dioxide solution from a generator, chlorine
 *   water from chlorine gas (see generatedStockText).
 * - aeration: the oxidant (oxygen from air) is dosed by aerating the water, not from a stock,
 *   so there are no aliquots to plan.
 */
export type JarStockRoute =
  | { readonly kind: 'solid'; readonly purityFraction?: number; readonly solubility?: Solubility }
  | {
      readonly kind: 'trade-solution';
      readonly tradeStrengthGPerL: number;
      /** True when the trade strength given was measured on the day of the test. */
      readonly strengthMeasured?: boolean;
    }
  | { readonly kind: 'generated'; readonly solubility?: Solubility; readonly measureBy?: string }
  | { readonly kind: 'aeration' };

export interface JarProductFacts {
  /** Product name for instructions ("potassium permanganate"). */
  readonly name?: string;
  /** The basis doses are reported on, without "as" ("KMnO4", "Cl2"). */
  readonly basis: string;
  readonly activeSpecies?: string;
  readonly productFormula?: string;
  readonly stock: JarStockRoute;
  /** For products whose strength decays in storage (hypochlorites). */
  readonly decays?: { readonly note: string; readonly measureBy: string };
  /** How the residual is measured; a default is taken from the basis when absent. */
  readonly residualMethod?: string;
  readonly sources?: readonly string[];
  /** Notes to pass on to the bench sheet (e.g. a default taken from a table). */
  readonly notes?: readonly string[];
}

/** The residual-oxidant method usually used for an oxidant on this basis (named methods; common practice). */
export function defaultResidualMethod(basis: string): string {
  switch (basis) {
    case 'KMnO4':
    case 'NaMnO4':
    case 'MnO4':
      return 'permanganate colour: pink seen by eye against white, or absorbance at 525 nm against standards made from the stock';
    case 'Cl2':
      return 'DPD colorimetric, free and total chlorine';
    case 'ClO2':
      return 'DPD with glycine to mask free chlorine (or amperometric titration)';
    case 'O3':
      return 'the indigo colorimetric method (or a similar method for dissolved ozone)';
    case 'H2O2':
      return 'peroxide colorimetric (titanium(IV) oxalate) or test strips';
    case 'O2':
      return 'dissolved-oxygen probe';
    default:
      return `the residual method for an oxidant dosed as ${basis}`;
  }
}

/** The product's name as it reads inside a sentence ("potassium permanganate"). */
export function productLabel(p: JarProductFacts): string {
  const label = p.name ?? p.productFormula ?? p.basis;
  // Lower-case a capitalised common name ("Ozone (generated on site)"), never a formula ("KMnO4", "O3").
  return /^[A-Z][a-z]/.test(label) ? label.charAt(0).toLowerCase() + label.slice(1) : label;
}

/** What a generated stock is and how it is made, in the words of the bench (common practice). */
export interface GeneratedStockText {
  /** The stock solution, e.g. "ozone water". */
  readonly stock: string;
  /** How to make it, a clause that starts with a verb. */
  readonly make: string;
}

/**
 * How the stock of a generated oxidant is made (common practice of bench work):
 * - O3: ozone water, ozone from a generator bubbled through chilled reagent water;
 * - ClO2: chlorine dioxide solution from the plant's generator (or made in the laboratory);
 * - Cl2 (chlorine gas): chlorine water, chlorine bubbled into chilled reagent water, or a
 *   hypochlorite stock on the same basis (as Cl2) in its place.
 */
export function generatedStockText(p: JarProductFacts): GeneratedStockText {
  switch (p.basis) {
    case 'O3':
      return { stock: 'ozone water', make: 'bubble ozone from a generator through chilled reagent water until its strength stops rising' };
    case 'ClO2':
      return { stock: 'chlorine dioxide solution', make: 'collect chlorine dioxide solution from the generator (or make it in the laboratory) into a chilled, closed amber bottle' };
    case 'Cl2':
      return {
        stock: 'chlorine water',
        make: 'bubble chlorine gas into chilled reagent water in a fume hood, or make the stock from sodium hypochlorite instead (same basis, as Cl2)',
      };
    default:
      return { stock: `${productLabel(p)} solution`, make: `collect ${productLabel(p)} solution from the generator` };
  }
}
