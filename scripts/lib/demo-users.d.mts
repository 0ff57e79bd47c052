export declare const DEMO_PASSWORD: string;
export declare const DEMO_USERS: {
  email: string;
  name: string;
  roles: ("mechanic" | "mentor" | "admin")[];
  says: string;
}[];
