/** The database of the API test run (recreated by global-setup.ts). */
export const TEST_DB = process.env.DRUMLINE_TEST_DB ?? 'drumline_test';
