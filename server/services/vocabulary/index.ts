// Search and procedures read the vocabulary through this one path.
export * from './device-types'
export * from './symptoms'
