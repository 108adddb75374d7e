/** Firmware generation: compile a flow table, render C or Rust from templates, bundle as a deterministic zip. */
export * from './bundle';
export * from './compile';
export * from './footprint';
export * from './identifiers';
export * from './options';
export * from './hash';
export * from './vectors';
