/**
 * Composition root: loads the reference tables once, builds the domain contexts once,
 * opens the archive. Routes receive these through app.services.
 */
export interface ServiceOptions {
  /** Folder for the archive database and generated sheets (DATA_DIR, default reports/). */
  dataDir: string;
  /** Token for the first admin when the archive has no users (BOOTSTRAP_TOKEN). */
  bootstrapToken?: string;
  /** Called once with a newly created admin token so the server can print it. */
  onAdminToken?: (token: string) => void;
}

export interface Services {
  close(): void;
}

export async function createServices(_options: ServiceOptions): Promise<Services> {
  return { close() {} };
}
