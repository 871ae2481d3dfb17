/** @type {import('next').NextConfig} */
const nextConfig = {
  // Keep the embedded database (wasm + data files), the pg driver and the scheduler out of the
  // client bundles and out of .next/static.
  serverExternalPackages: ["@electric-sql/pglite", "pglite-prisma-adapter", "pg", "node-cron"],
  poweredByHeader: false,
  reactStrictMode: true,
  typescript: { tsconfigPath: "tsconfig.json" },
};

export default nextConfig;
