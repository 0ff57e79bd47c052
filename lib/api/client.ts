/**
 * The one module with the API's query keys and fetchers, used by TanStack Query in the screens.
 * No React here: hooks call these. Errors arrive as ApiFailure with the server's error shape.
 */
export class ApiFailure extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly fields: Record<string, string> = {},
  ) {
    super(message);
  }
}

export async function apiFetch<T>(path: string, init: { method?: string; body?: unknown } = {}): Promise<T> {
  let res: Response;
  try {
    res = await fetch(path, {
      method: init.method ?? "GET",
      headers: init.body === undefined ? {} : { "content-type": "application/json" },
      body: init.body === undefined ? undefined : JSON.stringify(init.body),
      credentials: "same-origin",
    });
  } catch {
    throw new ApiFailure(0, "offline", "No connection to the server");
  }
  if (res.status === 204) return undefined as T;
  const json = (await res.json().catch(() => null)) as { error?: { code: string; message: string; fields?: Record<string, string> } } | null;
  if (!res.ok) throw new ApiFailure(res.status, json?.error?.code ?? "error", json?.error?.message ?? `The server answered ${res.status}`, json?.error?.fields);
  return json as T;
}

export const queryKeys = {
  me: () => ["me"] as const,
  engines: () => ["engines"] as const,
  engine: (id: string) => ["engines", id] as const,
  checks: (engineId: string) => ["engines", engineId, "checks"] as const,
  check: (id: string) => ["checks", id] as const,
  readings: (checkId: string) => ["checks", checkId, "readings"] as const,
  comments: (checkId: string) => ["checks", checkId, "comments"] as const,
  tray: () => ["tray"] as const,
  clubs: () => ["clubs"] as const,
  members: (clubId: string) => ["clubs", clubId, "members"] as const,
  invites: (clubId: string) => ["clubs", clubId, "invites"] as const,
  queue: (clubId: string) => ["clubs", clubId, "queue"] as const,
};

export interface Me {
  id: string;
  email: string;
  name: string;
  displayUnit: "mm" | "in";
  noticesByEmail: boolean;
}
export interface ClubSummary {
  id: string;
  name: string;
  roles: ("mechanic" | "mentor" | "admin")[];
}
export interface Member {
  userId: string;
  name: string;
  email: string;
  roles: ("mechanic" | "mentor" | "admin")[];
}
export interface QueueItem {
  shareId: string;
  checkId: string;
  engineName: string;
  ownerName: string;
  odometer: number;
  odometerUnit: "km" | "mi" | "h";
  status: string;
  verdict: string | null;
  sharedAt: string;
}

export const fetchers = {
  me: () => apiFetch<{ user: Me }>("/api/account").then((r) => r.user),
  clubs: () => apiFetch<{ items: ClubSummary[] }>("/api/clubs").then((r) => r.items),
  members: (clubId: string) => apiFetch<{ items: Member[] }>(`/api/clubs/${clubId}/members`).then((r) => r.items),
  queue: (clubId: string) => apiFetch<{ items: QueueItem[] }>(`/api/clubs/${clubId}/queue`).then((r) => r.items),
  engines: () => apiFetch<{ items: { id: string; name: string; cylinders: number }[] }>("/api/engines?limit=200").then((r) => r.items),
};

export const mutations = {
  signUp: (body: { email: string; name: string; password: string }) => apiFetch<{ message: string }>("/api/account/sign-up", { method: "POST", body }),
  verify: (token: string) => apiFetch("/api/account/verify", { method: "POST", body: { token } }),
  requestReset: (email: string) => apiFetch<{ message: string }>("/api/account/password-reset", { method: "POST", body: { email } }),
  setPassword: (token: string, password: string) => apiFetch("/api/account/password", { method: "POST", body: { token, password } }),
  requestLink: (email: string) => apiFetch<{ message: string }>("/api/account/sign-in-link", { method: "POST", body: { email } }),
  createClub: (name: string) => apiFetch<{ club: ClubSummary }>("/api/clubs", { method: "POST", body: { name } }),
  invite: (clubId: string, email: string, role: string) => apiFetch(`/api/clubs/${clubId}/invites`, { method: "POST", body: { email, role } }),
  setRoles: (clubId: string, userId: string, roles: string[]) => apiFetch(`/api/clubs/${clubId}/members/${userId}`, { method: "PUT", body: { roles } }),
  acceptInvite: (token: string) => apiFetch<{ clubId: string }>("/api/invites/accept", { method: "POST", body: { token } }),
};
