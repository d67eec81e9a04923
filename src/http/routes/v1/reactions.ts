import type { FastifyInstance } from 'fastify';
import { DomainError } from '../../../core/errors.js';
import { BalanceBody, BalanceResponse } from '../../schemas/chemistry.js';
import { defineRoute } from '../../route.js';
import { balanceService } from '../../../chemistry/balance/service.js';

export async function reactionRoutes(app: FastifyInstance): Promise<void> {
  defineRoute(app, {
    method: 'POST',
    url: '/reactions/balance',
    summary: 'Balance a reaction exactly (null space of the element-and-charge matrix) or a redox reaction from two couples (half-reaction method)',
    tags: ['chemistry'],
    body: BalanceBody,
    response: { 200: BalanceResponse },
    handler: async (req) => {
      const b = req.body;
      const generic = b.reactants !== undefined || b.products !== undefined;
      const redox = b.oxidant !== undefined || b.reductant !== undefined;
      if (generic && redox) {
        throw new DomainError('VALIDATION_FAILED', {
          detail: 'Give either reactants and products, or an oxidant and a reductant couple, not both.',
          fields: [
            { pointer: '/reactants', message: 'not allowed together with oxidant/reductant' },
            { pointer: '/oxidant', message: 'not allowed together with reactants/products' },
          ],
        });
      }
      if (!generic && !redox) {
        throw new DomainError('VALIDATION_FAILED', {
          detail: 'Give reactants and products, or an oxidant and a reductant couple.',
          fields: [{ pointer: '', message: 'needs "reactants" and "products", or "oxidant" and "reductant"' }],
        });
      }
      const elements = app.services.elements;
      if (generic) {
        const missing = [];
        if (!b.reactants) missing.push({ pointer: '/reactants', message: '"reactants" is required with "products"' });
        if (!b.products) missing.push({ pointer: '/products', message: '"products" is required with "reactants"' });
        if (missing.length) throw new DomainError('VALIDATION_FAILED', { detail: 'A reaction needs both reactants and products.', fields: missing });
        return balanceService({ reactants: b.reactants!, products: b.products!, medium: b.medium, pH: b.pH }, elements);
      }
      const missing = [];
      if (!b.oxidant) missing.push({ pointer: '/oxidant', message: '"oxidant" {from, to} is required with "reductant"' });
      if (!b.reductant) missing.push({ pointer: '/reductant', message: '"reductant" {from, to} is required with "oxidant"' });
      if (missing.length) throw new DomainError('VALIDATION_FAILED', { detail: 'A redox reaction needs an oxidant and a reductant couple.', fields: missing });
      return balanceService({ oxidant: b.oxidant!, reductant: b.reductant!, medium: b.medium, pH: b.pH }, elements);
    },
  });
}
