import type { Metadata } from "next";
import localFont from "next/font/local";
import "./globals.css";

const body = localFont({
  src: [
    { path: "./fonts/atkinson-400.woff2", weight: "400", style: "normal" },
    { path: "./fonts/atkinson-400-italic.woff2", weight: "400", style: "italic" },
    { path: "./fonts/atkinson-700.woff2", weight: "700", style: "normal" },
  ],
  variable: "--font-body",
  display: "swap",
});
const figures = localFont({ src: "./fonts/jetbrains-mono.woff2", variable: "--font-figures", display: "swap", weight: "100 800" });

// Every page is rendered per request, so each gets the script nonce of its Content Security Policy (proxy.ts).
export const dynamic = "force-dynamic";

export const metadata: Metadata = {
  title: { default: "Rimwatch", template: "%s · Rimwatch" },
  description: "Pneumothorax follow-up for respiratory teams",
};

export default function RootLayout({ children }: { children: React.ReactNode }) {
  return (
    <html lang="en-GB" className={`${body.variable} ${figures.variable}`}>
      <body className="min-h-screen font-sans antialiased">{children}</body>
    </html>
  );
}
