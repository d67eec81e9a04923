import type { FastifyInstance } from 'fastify';
import { reactionRoutes } from './reactions.js';
import { potentialRoutes } from './potentials.js';

export async function v1Routes(app: FastifyInstance): Promise<void> {
  await app.register(reactionRoutes);
  await app.register(potentialRoutes);
}
