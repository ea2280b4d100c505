/** The part of autocannon's API the load bench uses (bench/load.ts); autocannon ships no types. */
declare module 'autocannon' {
  namespace autocannon {
    interface Request {
      method?: string;
      path?: string;
      headers?: Record<string, string>;
      body?: string | Buffer;
      setupRequest?: (req: Request) => Request;
    }
    interface Options {
      url: string;
      connections?: number;
      pipelining?: number;
      duration?: number;
      amount?: number;
      headers?: Record<string, string>;
      requests?: Request[];
    }
    interface Histogram {
      average: number;
      p50: number;
      p90: number;
      p97_5: number;
      p99: number;
      max: number;
    }
    interface Result {
      duration: number;
      errors: number;
      timeouts: number;
      non2xx: number;
      latency: Histogram;
      requests: Histogram & { total: number };
    }
  }
  function autocannon(
    opts: autocannon.Options,
    cb: (err: Error | null, res: autocannon.Result) => void,
  ): { on(event: 'response', fn: (client: unknown, status: number, bytes: number, ms: number) => void): void };
  export default autocannon;
}
