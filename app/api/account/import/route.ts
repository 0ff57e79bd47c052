import { answers } from "@/lib/api/contract";
import { route } from "@/server/http";
import { importAccount } from "@/server/account-import";
import { contentTypeRefusal } from "@/server/request-guard";

/** An export's zip as the body (application/zip), into an account that holds nothing yet. */
export const POST = route({ response: answers.imported, status: 201 }, async ({ user, req }) => {
  const wrongType = contentTypeRefusal(req, "zip");
  if (wrongType) throw wrongType;
  return {
    imported: await importAccount(user, { bytes: Number(req.headers.get("content-length") ?? 0), stream: req.body }),
  };
});
