/** @type {import('next').NextConfig} */
const nextConfig = {
  // Separate build folders let several builds (tests, benchmarks) exist side by side.
  distDir: process.env.LINEMIX_DIST_DIR ?? ".next",
  poweredByHeader: false,
  reactStrictMode: true,
  // Native and WebAssembly engines stay outside the server bundle.
  serverExternalPackages: [
    "better-sqlite3",
    "@prisma/adapter-better-sqlite3",
    "@prisma/schema-engine-wasm",
    "pdfkit",
  ],
  typescript: { tsconfigPath: "tsconfig.json" },
};

export default nextConfig;
