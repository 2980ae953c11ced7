// `npm run db:seed`: seeds the demo workshop into DATABASE_URL unless data exists.
import { createDb } from '../server/db/client'
import { seedDemo } from '../server/db/seed'
import { app } from './env'
import { databaseUrl } from './pg'

const { db, pool } = createDb(process.env.DATABASE_URL ?? databaseUrl(app.pgPort, app.dbName), 1)
console.log((await seedDemo(db)) ? 'demo seeded' : 'data exists; nothing seeded')
await pool.end()
