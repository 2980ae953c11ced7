// Every table of the database, for drizzle-kit and the typed client.
export * from './workshop'
export * from './resources'
export * from './work'
export * from './bench'
export * from './mail'
export * from './files'
export * from './estimates'
export * from './materials'
