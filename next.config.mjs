/** @type {import('next').NextConfig} */
const https = (process.env.NEXTAUTH_URL ?? "").startsWith("https://");
const securityHeaders = [
  { key: "X-Content-Type-Options", value: "nosniff" },
  { key: "Referrer-Policy", value: "same-origin" },
  { key: "X-Frame-Options", value: "DENY" },
  { key: "Permissions-Policy", value: "camera=(), microphone=(), geolocation=(), payment=(), usb=()" },
  { key: "Cross-Origin-Opener-Policy", value: "same-origin" },
  { key: "Cross-Origin-Resource-Policy", value: "same-origin" },
  ...(https ? [{ key: "Strict-Transport-Security", value: "max-age=31536000" }] : []),
];
// Pages get a Content Security Policy with a per-response script nonce from proxy.ts. Route handlers
// answer JSON, images and files, never pages: nothing in them may run or be framed.
const apiHeaders = [{ key: "Content-Security-Policy", value: "default-src 'none'; frame-ancestors 'none'; base-uri 'none'; form-action 'none'" }];

const nextConfig = {
  // Several builds can live side by side (tests, benches) when NEXT_DIST_DIR is set.
  distDir: process.env.NEXT_DIST_DIR || ".next",
  poweredByHeader: false,
  // `npm test` type-checks the whole project with tsc (and lints it) as its own step, so the
  // build does not check types a second time.
  typescript: { ignoreBuildErrors: true },
  serverExternalPackages: ["knex", "pg", "pg-boss", "sharp", "dicom-parser", "jpeg-lossless-decoder-js", "pdfkit", "nodemailer", "bcryptjs"],
  experimental: {
    serverActions: { bodySizeLimit: "2mb" },
  },
  async headers() {
    return [
      { source: "/:path*", headers: securityHeaders },
      { source: "/api/:path*", headers: apiHeaders },
    ];
  },
};

export default nextConfig;
