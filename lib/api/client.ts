/**
 * The phone's client of the API: the query keys, fetchers and mutations the screens use through
 * TanStack Query (errors arrive as ApiFailure with the server's error shape); the background
 * sync's two calls are in ./sync-calls.ts, apart so that a page that only reads never loads them.
 * Every answer's type is the contract's (lib/api/contract.ts). No React here: hooks call these.
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

import type { answers, Answer, publicUser } from "./contract";

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

// The answers' types come from the contract (lib/api/contract.ts) with z.infer: types only, so no
// schema is added to a page's JavaScript.
export type Me = Answer<typeof publicUser>;
export type ClubSummary = Answer<typeof answers.clubs>["items"][number];
export type Member = Answer<typeof answers.members>["items"][number];
export type QueueItem = Answer<typeof answers.queue>["items"][number];
export type ApiComment = Answer<typeof answers.comment>["comment"];
export type ApiShare = Answer<typeof answers.share>["share"];
export type PushAnswer = Answer<typeof answers.push>;
export type PullAnswer = Answer<typeof answers.pull>;

export const fetchers = {
  me: () => apiFetch<Answer<typeof answers.accountGet>>("/api/account").then((r) => r.user),
  clubs: () => apiFetch<Answer<typeof answers.clubs>>("/api/clubs").then((r) => r.items),
  members: (clubId: string) =>
    apiFetch<Answer<typeof answers.members>>(`/api/clubs/${clubId}/members`).then((r) => r.items),
  queue: (clubId: string) => apiFetch<Answer<typeof answers.queue>>(`/api/clubs/${clubId}/queue`).then((r) => r.items),
  check: (id: string) => apiFetch<Answer<typeof answers.checkView>>(`/api/checks/${id}`),
  readings: (id: string) =>
    apiFetch<Answer<typeof answers.readings>>(`/api/checks/${id}/readings`).then((r) => r.readings),
  comments: (id: string) =>
    apiFetch<Answer<typeof answers.comments>>(`/api/checks/${id}/comments`).then((r) => r.items),
  shares: (id: string) => apiFetch<Answer<typeof answers.shares>>(`/api/checks/${id}/shares`).then((r) => r.items),
  photos: (id: string) => apiFetch<Answer<typeof answers.photos>>(`/api/checks/${id}/photos`).then((r) => r.items),
  photoUsage: () => apiFetch<Answer<typeof answers.photoUsage>>("/api/photos/usage"),
  pool: (clubId: string) => apiFetch<Answer<typeof answers.pool>>(`/api/clubs/${clubId}/pool`).then((r) => r.items),
  borrows: () => apiFetch<Answer<typeof answers.borrows>>("/api/borrows").then((r) => r.items),
  engines: () => apiFetch<Answer<typeof answers.engines>>("/api/engines?limit=200").then((r) => r.items),
};

export const mutations = {
  signUp: (body: { email: string; name: string; password: string }) =>
    apiFetch<Answer<typeof answers.accepted>>("/api/account/sign-up", { method: "POST", body }),
  verify: (token: string, password: string) =>
    apiFetch<Answer<typeof answers.verified>>("/api/account/verify", { method: "POST", body: { token, password } }),
  resendVerification: (email: string) =>
    apiFetch<Answer<typeof answers.accepted>>("/api/account/verify/resend", { method: "POST", body: { email } }),
  requestReset: (email: string) =>
    apiFetch<Answer<typeof answers.accepted>>("/api/account/password-reset", { method: "POST", body: { email } }),
  setPassword: (token: string, password: string) =>
    apiFetch<Answer<typeof answers.ok>>("/api/account/password", { method: "POST", body: { token, password } }),
  linkAccount: (token: string) =>
    apiFetch<Answer<typeof answers.linkAccount>>("/api/account/sign-in-link/account", {
      method: "POST",
      body: { token },
    }),
  requestLink: (email: string) =>
    apiFetch<Answer<typeof answers.accepted>>("/api/account/sign-in-link", { method: "POST", body: { email } }),
  createClub: (name: string) =>
    apiFetch<Answer<typeof answers.clubCreated>>("/api/clubs", { method: "POST", body: { name } }),
  invite: (clubId: string, email: string, role: string) =>
    apiFetch<Answer<typeof answers.invite>>(`/api/clubs/${clubId}/invites`, { method: "POST", body: { email, role } }),
  setRoles: (clubId: string, userId: string, roles: string[]) =>
    apiFetch<Answer<typeof answers.member>>(`/api/clubs/${clubId}/members/${userId}`, {
      method: "PUT",
      body: { roles },
    }),
  share: (checkId: string, clubId: string) =>
    apiFetch<Answer<typeof answers.share>>(`/api/checks/${checkId}/shares`, { method: "POST", body: { clubId } }),
  withdraw: (shareId: string) => apiFetch<undefined>(`/api/shares/${shareId}`, { method: "DELETE" }),
  comment: (checkId: string, body: string, valve: string | null) =>
    apiFetch<Answer<typeof answers.comment>>(`/api/checks/${checkId}/comments`, {
      method: "POST",
      body: { body, valve },
    }),
  verdict: (shareId: string, verdict: string) =>
    apiFetch<Answer<typeof answers.share>>(`/api/shares/${shareId}/verdict`, { method: "PUT", body: { verdict } }),
  unsubscribe: (token: string) =>
    apiFetch<Answer<typeof answers.unsubscribed>>(`/api/notices/unsubscribe?token=${encodeURIComponent(token)}`, {
      method: "POST",
    }),
  settings: (patch: Partial<Pick<Me, "name" | "displayUnit" | "noticesByEmail">>) =>
    apiFetch<Answer<typeof answers.accountPatch>>("/api/account", { method: "PATCH", body: patch }),
  acceptInvite: (token: string) =>
    apiFetch<Answer<typeof answers.inviteAccepted>>("/api/invites/accept", { method: "POST", body: { token } }),
};
