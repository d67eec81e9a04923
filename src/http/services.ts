/**
 * Composition root: loads the reference tables once, builds the domain contexts once
 * (ledger, dosing context), opens the archive, seeds the invented demo plant and the
 * demo signer on first start. Routes receive these through app.services.
 */
import { readFileSync } from 'node:fs';
import { loadReferenceTables, DEFAULT_TABLES_DIR } from '../reference/load.js';
import { join } from 'node:path';
import { atomicWeightMap, type ReferenceTables } from '../reference/schemas.js';
import { consistencyReport, type Ledger } from '../chemistry/thermo/index.js';
import { openArchive, type Archive } from '../archive/index.js';
import { buildDosingContext, parsePlantProfile, type DosingContext } from '../dosing/index.js';
import type { RedoxDeps } from '../water/redox-service.js';
import { redoxDepsOf } from '../dosing/redox-deps.js';
import { createDemoSigner, loadSigner, type SheetSigner } from '../sheets/sign.js';
import type { StoredSigner } from '../archive/index.js';

export interface ServiceOptions {
  /** Folder for the archive database and generated sheets (DATA_DIR, default reports/). */
  dataDir: string;
  /** Token for the first admin when the archive has no users (BOOTSTRAP_TOKEN). */
  bootstrapToken?: string;
  /** Called once with a newly created admin token so the server can print it. */
  onAdminToken?: (token: string) => void;
  /** Reference tables folder (default: the repository's tables/). */
  tablesDir?: string;
}

export interface Services {
  readonly tables: ReferenceTables;
  readonly elements: ReadonlySet<string>;
  readonly atomicWeights: ReadonlyMap<string, string>;
  readonly ledger: Ledger;
  readonly archive: Archive;
  readonly dosing: DosingContext;
  readonly redox: RedoxDeps;
  readonly potentialRows: PotentialTableOut;
  readonly oxidantList: { oxidants: Record<string, unknown>[] };
  /** Id of the invented demo plant seeded on first start. */
  readonly demoPlantId: string;
  /** The consistency report of the potentials (computed on first call, then kept). */
  consistency(): ConsistencyOut;
  /** The signer for a user (their own certificate, else the default demo signer), parsed once. */
  signerFor(userId: string): { stored: StoredSigner; signer: SheetSigner };
  /** Drop a cached signer after a new certificate is imported. */
  forgetSigner(userId: string): void;
  readonly dataDir: string;
  close(): void;
}

export interface PotentialTableOut {
  table: string;
  description: string;
  rows: {
    id: string;
    halfReaction: string;
    value: string;
    quantity: string;
    electrons: number | null;
    dEdTmVPerK: string | null;
    uncertaintyV: string | null;
    source: string;
    citation: string;
    note: string | null;
  }[];
}

export interface ConsistencyOut {
  thresholdMV: number;
  entries: {
    rowId: string;
    halfReaction: string;
    source: string;
    tabledV: number;
    derivedV: number;
    discrepancyMV: number;
    flagged: boolean;
    maxDiscrepancyMV: number;
    via: { rowId: string; coefficient: string; source: string }[];
    otherDerivations: { derivedV: number; discrepancyMV: number; via: string[] }[];
  }[];
  duplicates: { halfReaction: string; rows: { rowId: string; value: string; source: string }[]; spreadMV: number }[];
  underivable: string[];
}

function potentialTable(tables: ReferenceTables, citations: ReadonlyMap<string, string>): PotentialTableOut {
  return {
    table: 'potentials',
    description: 'Standard reduction potentials at 25 °C as published (tables/potentials.json); rows printed as log K or pε° by their source are kept in that form.',
    rows: tables.potentials.map((r) => {
      const row = r as Record<string, unknown>;
      const quantity = row['potentialV'] !== undefined ? 'E° (V)' : row['logK'] !== undefined ? 'log K' : 'pε°';
      const value = String(row['potentialV'] ?? row['logK'] ?? row['peStandard'] ?? '');
      return {
        id: r.id,
        halfReaction: r.halfReaction,
        value,
        quantity,
        electrons: typeof row['electrons'] === 'number' ? (row['electrons'] as number) : null,
        dEdTmVPerK: typeof row['dEdTmVPerK'] === 'string' ? (row['dEdTmVPerK'] as string) : null,
        uncertaintyV: typeof row['uncertaintyV'] === 'string' ? (row['uncertaintyV'] as string) : null,
        source: r.source,
        citation: citations.get(r.source) ?? r.source,
        note: typeof row['note'] === 'string' ? (row['note'] as string) : null,
      };
    }),
  };
}

function consistencyOut(ledger: Ledger): ConsistencyOut {
  const rep = consistencyReport(ledger);
  return {
    thresholdMV: rep.thresholdMV,
    entries: rep.entries.map((e) => ({
      rowId: e.rowId,
      halfReaction: e.equation,
      source: e.source,
      tabledV: e.tabledV,
      derivedV: e.derivedV,
      discrepancyMV: e.discrepancyMV,
      flagged: e.flagged,
      maxDiscrepancyMV: e.maxDiscrepancyMV,
      via: e.derivation.map((d) => ({ rowId: d.rowId, coefficient: d.coefficient, source: d.source })),
      otherDerivations: e.otherDerivations.map((o) => ({ derivedV: o.derivedV, discrepancyMV: o.discrepancyMV, via: o.derivation.map((d) => d.rowId) })),
    })),
    duplicates: rep.duplicates.map((d) => ({
      halfReaction: d.equation,
      rows: d.rows.map((r) => ({ rowId: r.rowId, value: String(r.valueV), source: r.source })),
      spreadMV: d.spreadMV,
    })),
    underivable: [...rep.underivable],
  };
}

export async function createServices(options: ServiceOptions): Promise<Services> {
  const tables = loadReferenceTables(options.tablesDir);
  const atomicWeights = atomicWeightMap(tables);
  const dosing = buildDosingContext(tables);
  const elements = new Set(atomicWeights.keys());
  const redox: RedoxDeps = redoxDepsOf(dosing);

  let consistency: ConsistencyOut | undefined;
  const archive = openArchive({ dataDir: options.dataDir });
  // The invented demo plant (tables/demo/), validated like any profile, stored once.
  const demoPlant = parsePlantProfile(JSON.parse(readFileSync(join(options.tablesDir ?? DEFAULT_TABLES_DIR, 'demo', 'demo-plant.json'), 'utf8')), dosing.strengthLimits);
  archive.seedPlant(demoPlant, { createdBy: 'system (invented demo data)' });
  // A clearly labelled self-signed demo signer, made once, so sheets can be signed with no setup.
  // The key is made outside the write lock; the store checks again inside it, so two processes
  // starting at once on an empty folder keep one demo signer.
  if (!archive.hasDefaultSigner()) {
    const demo = createDemoSigner({ name: 'Demo signer', role: 'Demonstration only', organisation: 'oxidant-dosing demo' });
    archive.addDefaultSignerIfNone({
      name: 'Demo signer',
      role: 'Demonstration only',
      certificateSubject: demo.signer.identity.certificateSubject,
      p12: demo.p12,
      password: demo.password,
      demo: true,
      createdBy: 'system (first start)',
    });
  }
  const signerCache = new Map<string, { stored: StoredSigner; signer: SheetSigner }>();
  // Keyed by user: a user without a certificate of their own signs with the default (demo)
  // certificate under their own name and role; the certificate subject says it is a demo.
  const signerFor = (userId: string) => {
    let hit = signerCache.get(userId);
    if (!hit) {
      const stored = archive.getSignerForUser(userId, { fallbackToDefault: true });
      if (!stored) throw new Error('no default signer in the archive');
      const user = archive.getUser(userId);
      const own = stored.userId === userId;
      const name = own || !user ? stored.name : user.name;
      const role = own || !user ? stored.role : user.role;
      hit = { stored: { ...stored, name, role }, signer: loadSigner(stored.p12, stored.password, { name, role }) };
      signerCache.set(userId, hit);
    }
    return hit;
  };
  const boot = archive.bootstrapAdmin({ bootstrapToken: options.bootstrapToken });
  if (boot.created && boot.token) options.onAdminToken?.(boot.token);
  return {
    tables,
    elements,
    atomicWeights,
    ledger: dosing.ledger,
    archive,
    dosing,
    redox,
    potentialRows: potentialTable(tables, dosing.citations),
    oxidantList: {
      oxidants: tables.oxidants.map((o) => ({ ...(o as Record<string, unknown>), citation: dosing.citations.get(o.source) ?? o.source })),
    },
    demoPlantId: demoPlant.id,
    signerFor,
    forgetSigner: () => signerCache.clear(),
    consistency: () => (consistency ??= consistencyOut(dosing.ledger)),
    dataDir: options.dataDir,
    close() {
      archive.close();
    },
  };
}
