/** @type {import('next').NextConfig} */
const securityHeaders = [
  { key: "X-Content-Type-Options", value: "nosniff" },
  { key: "Referrer-Policy", value: "same-origin" },
  { key: "X-Frame-Options", value: "DENY" },
  { key: "Permissions-Policy", value: "camera=(), microphone=(), geolocation=()" },
];

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
    return [{ source: "/:path*", headers: securityHeaders }];
  },
};

export default nextConfig;
