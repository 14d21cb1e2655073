import type { Config } from "tailwindcss";

// Tessera's own palette: ink navy for text and chrome, ochre as the accent. Cluster colours (local Moran) and Gi* colours (hot and cold) are used by maps and legends.
const config: Config = {
  content: ["./app/**/*.{ts,tsx}", "./components/**/*.{ts,tsx}"],
  theme: {
    extend: {
      colors: {
        ink: { DEFAULT: "#1e2a44", 50: "#f3f5f9", 100: "#e3e7ef", 200: "#c3cbdb", 300: "#94a1bd", 400: "#56658a", 500: "#45557b", 600: "#334262", 700: "#283552", 800: "#1e2a44", 900: "#141c2f" },
        ochre: { DEFAULT: "#c98a1b", 50: "#fdf8ec", 100: "#f8ebc9", 200: "#f0d48e", 300: "#e6b955", 400: "#d9a033", 500: "#c98a1b", 600: "#a86d14", 700: "#865214", 800: "#6d4217", 900: "#5b3717" },
        cluster: { hh: "#9a3412", ll: "#115e59", hl: "#fdba74", lh: "#5eead4", ns: "#e7e5e4" },
        gistar: { hot: "#be123c", cold: "#3b82f6" },
      },
      fontFamily: { sans: ["var(--font-tessera)", "system-ui", "sans-serif"] },
    },
  },
};
export default config;
