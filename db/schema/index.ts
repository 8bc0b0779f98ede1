// All tables, for drizzle-kit and the typed client. Other areas add their own files here (e.g. ./analyses).
export * from './auth';
export * from './teams';
export * from './audit';
export * from './mail';
export * from './tokens';
export * from './analyses';
export * from './security';
export * from './limits';
export * from './reviews';
export * from './models';
