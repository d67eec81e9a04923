/**
 * Composition root: loads the reference tables once, builds the domain contexts once
 * (ledger, dosing context), opens the archive, seeds the invented demo plant and the
 * demo signer on first start. Routes receive these through app.services.
 */
import { loadReferenceTables } from '../reference/load.js';
import { atomicWeightMap, type ReferenceTables } from '../reference/schemas.js';
import { buildLedger, type Ledger } from '../chemistry/thermo/index.js';
import { openArchive, type Archive } from '../archive/index.js';

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
  readonly dataDir: string;
  close(): void;
}

export async function createServices(options: ServiceOptions): Promise<Services> {
  const tables = loadReferenceTables(options.tablesDir);
  const atomicWeights = atomicWeightMap(tables);
  const ledger = buildLedger(tables);
  const archive = openArchive({ dataDir: options.dataDir });
  const boot = archive.bootstrapAdmin({ bootstrapToken: options.bootstrapToken });
  if (boot.created && boot.token) options.onAdminToken?.(boot.token);
  return {
    tables,
    elements: new Set(atomicWeights.keys()),
    atomicWeights,
    ledger,
    archive,
    dataDir: options.dataDir,
    close() {
      archive.close();
    },
  };
}
