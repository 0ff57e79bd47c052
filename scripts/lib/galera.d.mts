// Types for the parts of galera.mjs that the cluster tests use.
export interface ClusterNode {
  name: string;
  dir: string;
  port: number;
  /** the node's error log */
  errFile: string;
}
export interface ClusterSpec {
  dir: string;
  name: string;
  user: string;
  password: string;
  database: string;
  nodes: ClusterNode[];
  urls: string[];
}
export function startNode(
  spec: ClusterSpec,
  i: number,
  opts?: { bootstrap?: boolean; timeoutMs?: number },
): Promise<number>;
export function stopNode(spec: ClusterSpec, i: number, opts?: { timeoutMs?: number }): Promise<void>;
/** wsrep status of one node (variable name to value), or null when it does not answer. */
export function nodeStatus(n: ClusterNode): Promise<Record<string, string> | null>;
/** a node's long-running statements and its wsrep wait counters, or null when it does not answer */
export function nodeActivity(n: ClusterNode): Promise<{ busy: string; counters: string } | null>;
export function killNode(spec: ClusterSpec, i: number): Promise<void>;
export function waitClusterSynced(spec: ClusterSpec, timeoutMs?: number): Promise<void>;
export function freePorts(n: number): Promise<number[]>;
