// The registry services: every rule of api.md's registry model lives here; routes stay thin.
export * from './access';
export * from './errors';
export * from './formulations';
export * from './versions';
export * from './reviews';
export * from './projects';
export * from './compare';
export * from './audit-trail';
export { verifyAuditChain } from './audit';
export * from './caching';
export * from './schemas';
