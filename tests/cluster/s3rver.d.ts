// s3rver ships no type declarations; the part the cluster suite uses.
declare module 's3rver' {
  import type { Server } from 'node:http'
  export interface S3rverOptions {
    port?: number
    address?: string
    silent?: boolean
    directory?: string
    configureBuckets?: { name: string; configs: string[] }[]
  }
  export default class S3rver {
    constructor(options: S3rverOptions)
    httpServer?: Server
    run(): Promise<unknown>
    close(callback?: (error?: Error) => void): unknown
  }
}
