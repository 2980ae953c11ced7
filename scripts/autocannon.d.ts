// Type stub for autocannon (it ships no types).
declare module 'autocannon'
