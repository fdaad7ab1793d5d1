// The bucket is used by uploads, captures, backup and the seed: one import path for all of them.
export * from './object-store'
