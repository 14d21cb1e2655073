import type { Metadata } from "next";
import localFont from "next/font/local";
import { connection } from "next/server";
import { SkipLink } from "@/components/ui/skip-link";
import "./globals.css";

// Shipped with the app: no web-font download at build or run time.
const tesseraFont = localFont({
  src: [
    { path: "./fonts/inter-latin-400-normal.woff2", weight: "400", style: "normal" },
    { path: "./fonts/inter-latin-600-normal.woff2", weight: "600", style: "normal" },
    { path: "./fonts/inter-latin-700-normal.woff2", weight: "700", style: "normal" },
  ],
  variable: "--font-tessera",
  display: "swap",
});

export const metadata: Metadata = {
  title: { default: "Tessera", template: "%s · Tessera" },
  description: "A data room for regional economists: spatial clustering of regional indicators over time.",
};

export default async function RootLayout({ children }: { children: React.ReactNode }) {
  // Every page renders per request so Next.js can stamp the CSP nonce from
  // proxy.ts on its scripts; a page prerendered at build time (the not-found
  // page was) would carry scripts the policy blocks.
  await connection();
  return (
    <html lang="en" className={tesseraFont.variable}>
      <body className="min-h-screen font-sans antialiased">
        <SkipLink />
        {children}
      </body>
    </html>
  );
}
