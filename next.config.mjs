/** @type {import('next').NextConfig} */
const nextConfig = {
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
