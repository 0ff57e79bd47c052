import { answers } from "@/lib/api/contract";
import { route } from "@/server/http";
import { photoUsage } from "@/server/photos";

/** How much photo space the signed-in account uses, of how much: the phone says it where photos are added. */
export const GET = route({ response: answers.photoUsage }, async ({ user }) => photoUsage(user));
