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
  const json = (await res.json().catch(() => null)) as {
    error?: { code: string; message: string; fields?: Record<string, string> };
  } | null;
  if (!res.ok)
    throw new ApiFailure(
      res.status,
      json?.error?.code ?? "error",
      json?.error?.message ?? `The server answered ${res.status}`,
      json?.error?.fields,
    );
  return json as T;
}

import type { ApiPhoto, PhotoUsage } from "../photos/rules";
import type { ApiBorrow, ApiOffer } from "../pool/rules";
import type { Verdict } from "../check/verdicts";
import type { LengthUnit, OdometerUnit } from "../lash/units";
import type { Role } from "../roles";

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
  shares: (checkId: string) => ["checks", checkId, "shares"] as const,
  photos: (checkId: string) => ["checks", checkId, "photos"] as const,
  photoUsage: () => ["photo-usage"] as const,
  pool: (clubId: string) => ["clubs", clubId, "pool"] as const,
  borrows: () => ["clubs", "borrows"] as const,
};

export interface Me {
  id: string;
  email: string;
  name: string;
  displayUnit: LengthUnit;
  noticesByEmail: boolean;
}
export interface ClubSummary {
  id: string;
  name: string;
  roles: Role[];
}
export interface Member {
  userId: string;
  name: string;
  email: string;
  roles: Role[];
}
export interface QueueItem {
  shareId: string;
  checkId: string;
  engineName: string;
  ownerName: string;
  odometer: number;
  odometerUnit: OdometerUnit;
  status: string;
  verdict: string | null;
  sharedAt: string;
}

export interface ApiComment {
  id: string;
  checkId: string;
  valve: string | null;
  body: string;
  createdAt: string;
  /** null: the author deleted their account (authorName is then FORMER_MEMBER) */
  authorId: string | null;
  authorName: string;
}
export interface ApiShare {
  id: string;
  checkId: string;
  clubId: string;
  verdict: Verdict | null;
  verdictAt: string | null;
  withdrawnAt: string | null;
}

export const fetchers = {
  me: () => apiFetch<{ user: Me }>("/api/account").then((r) => r.user),
  clubs: () => apiFetch<{ items: ClubSummary[] }>("/api/clubs").then((r) => r.items),
  members: (clubId: string) => apiFetch<{ items: Member[] }>(`/api/clubs/${clubId}/members`).then((r) => r.items),
  queue: (clubId: string) => apiFetch<{ items: QueueItem[] }>(`/api/clubs/${clubId}/queue`).then((r) => r.items),
  check: (id: string) =>
    apiFetch<{
      check: {
        id: string;
        engineId: string;
        odometer: number;
        status: string;
        startedAt: string;
        notes: string | null;
        measuredHot: boolean;
      };
      engine: Record<string, unknown>;
      access: "owner" | "mentor";
    }>(`/api/checks/${id}`),
  readings: (id: string) =>
    apiFetch<{ readings: Record<string, unknown>[] }>(`/api/checks/${id}/readings`).then((r) => r.readings),
  comments: (id: string) => apiFetch<{ items: ApiComment[] }>(`/api/checks/${id}/comments`).then((r) => r.items),
  shares: (id: string) => apiFetch<{ items: ApiShare[] }>(`/api/checks/${id}/shares`).then((r) => r.items),
  photos: (id: string) => apiFetch<{ items: ApiPhoto[] }>(`/api/checks/${id}/photos`).then((r) => r.items),
  photoUsage: () => apiFetch<PhotoUsage>("/api/photos/usage"),
  pool: (clubId: string) => apiFetch<{ items: ApiOffer[] }>(`/api/clubs/${clubId}/pool`).then((r) => r.items),
  borrows: () => apiFetch<{ items: ApiBorrow[] }>("/api/borrows").then((r) => r.items),
  engines: () =>
    apiFetch<{ items: { id: string; name: string; cylinders: number }[] }>("/api/engines?limit=200").then(
      (r) => r.items,
    ),
};

export const mutations = {
  signUp: (body: { email: string; name: string; password: string }) =>
    apiFetch<{ message: string }>("/api/account/sign-up", { method: "POST", body }),
  verify: (token: string, password: string) =>
    apiFetch<{ ok: true; email: string }>("/api/account/verify", { method: "POST", body: { token, password } }),
  resendVerification: (email: string) =>
    apiFetch<{ message: string }>("/api/account/verify/resend", { method: "POST", body: { email } }),
  requestReset: (email: string) =>
    apiFetch<{ message: string }>("/api/account/password-reset", { method: "POST", body: { email } }),
  setPassword: (token: string, password: string) =>
    apiFetch("/api/account/password", { method: "POST", body: { token, password } }),
  linkAccount: (token: string) =>
    apiFetch<{ account: { email: string } }>("/api/account/sign-in-link/account", { method: "POST", body: { token } }),
  requestLink: (email: string) =>
    apiFetch<{ message: string }>("/api/account/sign-in-link", { method: "POST", body: { email } }),
  createClub: (name: string) => apiFetch<{ club: ClubSummary }>("/api/clubs", { method: "POST", body: { name } }),
  invite: (clubId: string, email: string, role: string) =>
    apiFetch(`/api/clubs/${clubId}/invites`, { method: "POST", body: { email, role } }),
  setRoles: (clubId: string, userId: string, roles: string[]) =>
    apiFetch(`/api/clubs/${clubId}/members/${userId}`, { method: "PUT", body: { roles } }),
  share: (checkId: string, clubId: string) =>
    apiFetch<{ share: ApiShare }>(`/api/checks/${checkId}/shares`, { method: "POST", body: { clubId } }),
  withdraw: (shareId: string) => apiFetch(`/api/shares/${shareId}`, { method: "DELETE" }),
  comment: (checkId: string, body: string, valve: string | null) =>
    apiFetch<{ comment: ApiComment }>(`/api/checks/${checkId}/comments`, { method: "POST", body: { body, valve } }),
  verdict: (shareId: string, verdict: string) =>
    apiFetch<{ share: ApiShare }>(`/api/shares/${shareId}/verdict`, { method: "PUT", body: { verdict } }),
  unsubscribe: (token: string) =>
    apiFetch<{ stopped: true }>(`/api/notices/unsubscribe?token=${encodeURIComponent(token)}`, { method: "POST" }),
  settings: (patch: Partial<Pick<Me, "name" | "displayUnit" | "noticesByEmail">>) =>
    apiFetch<{ user: Me }>("/api/account", { method: "PATCH", body: patch }),
  acceptInvite: (token: string) =>
    apiFetch<{ clubId: string; clubName: string }>("/api/invites/accept", { method: "POST", body: { token } }),
};
