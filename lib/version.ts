/** The code version stamped on every fit (package version; a git describe may be added at build). */
import pkg from "../package.json" with { type: "json" };
export const APP_VERSION: string = process.env.IDEAFRONT_CODE_VERSION ?? pkg.version;
