// The part of autocannon's API the load tests use (the package ships no types).
declare module 'autocannon' {
  interface RequestParams {
    method?: string
    path?: string
    headers?: Record<string, string>
    body?: string
  }
  interface Options {
    url: string
    connections?: number
    duration?: number
    timeout?: number
    headers?: Record<string, string>
    requests?: { setupRequest?: (request: RequestParams) => RequestParams }[]
  }
  interface Histogram {
    average: number
    mean: number
    p50: number
    p90: number
    p99: number
    max: number
    total: number
  }
  interface Result {
    requests: Histogram
    latency: Histogram
    throughput: Histogram
    errors: number
    timeouts: number
    non2xx: number
  }
  function autocannon(options: Options): Promise<Result>
  export default autocannon
}
