import type { Metadata } from "next";
import localFont from "next/font/local";
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

export default function RootLayout({ children }: { children: React.ReactNode }) {
  return (
    <html lang="en" className={tesseraFont.variable}>
      <body className="min-h-screen font-sans antialiased">{children}</body>
    </html>
  );
}
