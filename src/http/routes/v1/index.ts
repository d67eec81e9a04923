import type { FastifyInstance } from 'fastify';
import { reactionRoutes } from './reactions.js';
import { potentialRoutes } from './potentials.js';
import { dosingRoutes } from './dosing.js';
import { sheetRoutes } from './sheets.js';
import { userRoutes } from './users.js';

export async function v1Routes(app: FastifyInstance): Promise<void> {
  await app.register(reactionRoutes);
  await app.register(potentialRoutes);
  await app.register(dosingRoutes);
  await app.register(sheetRoutes);
  await app.register(userRoutes);
  await app.register((await import('./jar-tests.js')).jarTestRoutes);
}
