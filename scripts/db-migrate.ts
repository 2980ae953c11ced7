// `npm run db:migrate`: applies migrations to DATABASE_URL (or the npm start cluster, which must be running).
import { createDb } from '../server/db/client'
import { runMigrations } from '../server/db/migrate'
import { app } from './env'
import { databaseUrl } from './pg'

const { db, pool } = createDb(process.env.DATABASE_URL ?? databaseUrl(app.pgPort, app.dbName), 1)
await runMigrations(db)
await pool.end()
console.log('migrations applied')
