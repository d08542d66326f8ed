// Tailwind v4 reads its theme from app/globals.css (@theme); this file names the sources and is
// loaded there with @config so tools that expect it keep working.
import type { Config } from "tailwindcss";

const config: Config = {
  content: ["./app/**/*.{ts,tsx}", "./components/**/*.{ts,tsx}"],
};

export default config;
