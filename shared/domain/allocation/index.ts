// Engines allocated to a team's coming events: model, plan check, headroom. Pure.
export * from './types'
export * from './calendar'
export * from './model'
export * from './check'
export * from './headroom'
