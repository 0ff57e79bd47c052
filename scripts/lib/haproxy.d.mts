// Types for the parts of haproxy.mjs that the cluster tests use.
export const READY_PATH: string;
export const HEALTH_PATH: string;
export interface HaproxyOptions {
  dir: string;
  frontPort: number;
  statsPort: number;
  apps: { name: string; port: number }[];
  db?: {
    nodes: { name: string; port: number }[];
    listeners: { port: number; prefer: number }[];
    user: string;
    password: string;
    database: string;
  };
  healthPath?: string;
  echo?: boolean;
}
export interface Haproxy {
  url: string;
  statsUrl: string;
  dbUrls: string[];
  /** "proxy/server" -> HAProxy's status ("UP", "DOWN", "UP 1/2", ...) */
  servers(): Promise<Record<string, string>>;
  waitUp(names: string[], timeoutMs?: number): Promise<void>;
  output(): string;
  stop(): Promise<void>;
}
export function startHaproxy(opts: HaproxyOptions): Promise<Haproxy>;
