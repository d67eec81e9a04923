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
 * - generated: the stock comes from a generator (chlorine dioxide, ozone, chlorine water);
 *   its strength must be measured and given.
 */
export type JarStockRoute =
  | { readonly kind: 'solid'; readonly purityFraction?: number; readonly solubility?: Solubility }
  | {
      readonly kind: 'trade-solution';
      readonly tradeStrengthGPerL: number;
      /** True when the trade strength given was measured on the day of the test. */
      readonly strengthMeasured?: boolean;
    }
  | { readonly kind: 'generated'; readonly solubility?: Solubility; readonly measureBy?: string };

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
      return 'indigo colorimetric';
    case 'H2O2':
      return 'peroxide colorimetric (titanium(IV) oxalate) or test strips';
    case 'O2':
      return 'dissolved-oxygen probe';
    default:
      return `the residual method for an oxidant dosed as ${basis}`;
  }
}
