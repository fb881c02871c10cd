import pkg from "../../package.json";

/** The app's version, from package.json. */
export const APP_VERSION: string = pkg.version;
