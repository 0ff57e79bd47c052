// The demo sign-ins printed by `npm start`; db/seed.ts imports the same list so the two cannot differ.
export const DEMO_PASSWORD = "garage-demo-2026";
export const DEMO_USERS = [
  {
    email: "mara@kestrel-hollow.example",
    name: "Mara Quillfeather",
    roles: ["mechanic"],
    says: "mechanic: owns the engines and does the checks",
  },
  {
    email: "teodor@kestrel-hollow.example",
    name: "Teodor Brannigan",
    roles: ["mechanic", "mentor"],
    says: "mentor: reviews checks shared with the club",
  },
  {
    email: "ines@kestrel-hollow.example",
    name: "Ines Okafor-Lind",
    roles: ["admin"],
    says: "club admin: manages members and roles",
  },
];
