import bcrypt from "bcryptjs";

const COST = 11;

// Compared against when the address is unknown, so an unknown address takes
// as long to refuse as a wrong password (no timing hint about who has an account).
const DECOY_HASH = "$2b$11$z2nV1UXuebcDTz0rHPLLvODz1ipuCOFMeTm3w.vKbVsKT.Xh3Gnva";

export function hashPassword(password: string): Promise<string> {
  return bcrypt.hash(password, COST);
}

export async function verifyPassword(password: string, hash: string | null): Promise<boolean> {
  if (!hash) {
    await bcrypt.compare(password, DECOY_HASH);
    return false;
  }
  return bcrypt.compare(password, hash);
}
