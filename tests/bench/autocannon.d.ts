// The part of autocannon's API the server bench uses (the package ships no types of its own).
declare module "autocannon" {
  import type { EventEmitter } from "node:events";
  type Request = { method?: string; path?: string; headers?: Record<string, string>; body?: string };
  export type Options = {
    url: string;
    connections?: number;
    duration?: number;
    overallRate?: number;
    timeout?: number;
    headers?: Record<string, string>;
    requests?: (Request & {
      setupRequest?: (req: Request, context: Record<string, unknown>) => Request;
      onResponse?: (status: number, body: string, context: Record<string, unknown>, headers: Record<string, string>) => void;
    })[];
  };
  export type Result = {
    duration: number;
    errors: number;
    timeouts: number;
    non2xx: number;
    "1xx": number;
    "2xx": number;
    "3xx": number;
    "4xx": number;
    "5xx": number;
    requests: { average: number; total: number };
  };
  export type Instance = EventEmitter & Promise<Result> & { stop(): void };
  export default function autocannon(options: Options): Instance;
}
