/** The engine's public surface: every module re-exported. */
export * from './model';
export * from './settle';
export * from './runtime';
export * from './tour';
export * from './minimize/index';
export * from './findings';
export * from './analyze';
export * from './simulate';
export * from './fill';
export * from './diff';
export * from './formats/index';
