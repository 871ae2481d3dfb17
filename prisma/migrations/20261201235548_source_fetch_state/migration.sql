-- AlterTable
ALTER TABLE "source" ADD COLUMN     "fetch_state" JSONB;
