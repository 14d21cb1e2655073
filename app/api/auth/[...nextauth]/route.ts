import NextAuth from "next-auth";
import type { NextRequest } from "next/server";
import { withDeviceCookie } from "@/lib/auth/device-cookie-response";
import { authOptions } from "@/lib/auth/options";
import { env } from "@/lib/config/env";

const handler = NextAuth(authOptions);

type Context = { params: Promise<{ nextauth: string[] }> };

export async function GET(request: NextRequest, context: Context): Promise<Response> {
  return handler(request, context);
}

// A successful sign-in also gets a device cookie (lib/auth/device-cookie.ts).
export async function POST(request: NextRequest, context: Context): Promise<Response> {
  const response: Response = await handler(request, context);
  const { NEXTAUTH_URL, NEXTAUTH_SECRET } = env();
  return withDeviceCookie(request, response, NEXTAUTH_URL, NEXTAUTH_SECRET ?? process.env.AUTH_SECRET);
}
