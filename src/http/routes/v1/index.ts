import type { FastifyInstance } from 'fastify';

export async function v1Routes(_app: FastifyInstance): Promise<void> {}
