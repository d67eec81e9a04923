/**
 * Total dose = Σ contaminant demand + background demand + target residual, each term shown
 * with its reason and source, on the oxidant's basis (mg/L as KMnO4, as Cl2, …).
 */
import { Dec, type Dec as DecT } from '../core/decimal.js';
import type { OxidantRow } from '../reference/dosing-schemas.js';
import type { BackgroundTerm, DemandWork } from './demand.js';
import { reported, type Reported } from './types.js';

export interface DoseTerm {
  readonly term: 'contaminant' | 'background' | 'residual';
  /** Contaminant id for contaminant terms. */
  readonly id: string;
  readonly label: string;
  readonly value: Reported;
  readonly reason: string;
  readonly source: string;
}

export interface DoseTotal {
  readonly doseMgPerL: DecT;
  readonly dose: Reported & { readonly basis: string };
  readonly terms: readonly DoseTerm[];
  readonly residualMgPerL: DecT;
  readonly backgroundMgPerL: DecT;
  readonly contaminantDemandMgPerL: DecT;
}

export function totalDose(input: {
  readonly oxidant: OxidantRow;
  readonly demands: readonly DemandWork[];
  readonly background: BackgroundTerm;
  readonly residualMgPerL: DecT;
  readonly residualReason: string;
  readonly residualSource: string;
}): DoseTotal {
  const { oxidant: ox } = input;
  const unit = `mg/L as ${ox.doseBasis}`;
  const terms: DoseTerm[] = [];
  let contaminant = new Dec(0);
  for (const d of input.demands) {
    contaminant = contaminant.plus(d.demandMgPerL);
    const e = d.entry;
    terms.push({
      term: 'contaminant',
      id: e.contaminant,
      label: `${e.name}: ${e.concentration.rounded} mg/L ${e.reportedAs} × ${e.ratioRounded} ${e.ratioUnit}`,
      value: reported(d.demandMgPerL, unit),
      reason: `${e.ratioKind === 'practical' ? 'Practical design ratio (common practice)' : 'Stoichiometric demand of the balanced reaction'} ${e.reaction}.`,
      source: e.source,
    });
  }
  terms.push({
    term: 'background',
    id: 'background',
    label: input.background.method === 'none' ? 'Background demand: not given' : 'Background demand',
    value: reported(input.background.mgPerL, unit),
    reason: input.background.reason,
    source: input.background.source,
  });
  terms.push({
    term: 'residual',
    id: 'residual',
    label: 'Target residual after contact',
    value: reported(input.residualMgPerL, unit),
    reason: input.residualReason,
    source: input.residualSource,
  });
  const dose = contaminant.plus(input.background.mgPerL).plus(input.residualMgPerL);
  return {
    doseMgPerL: dose,
    dose: { ...reported(dose, 'mg/L'), basis: `as ${ox.doseBasis}` },
    terms,
    residualMgPerL: input.residualMgPerL,
    backgroundMgPerL: input.background.mgPerL,
    contaminantDemandMgPerL: contaminant,
  };
}
