// The sandbox produces exactly the kernel's Tabulation: { nodes, dim, points, N, dN }.
export type { Tabulation } from '@isoledger/kernel';
