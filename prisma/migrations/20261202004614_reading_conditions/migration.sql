-- AlterTable
ALTER TABLE "Reading" ADD COLUMN "gridVolts" REAL;
ALTER TABLE "Reading" ADD COLUMN "heaterVolts" REAL;
ALTER TABLE "Reading" ADD COLUMN "plateVolts" REAL;
ALTER TABLE "Reading" ADD COLUMN "screenVolts" REAL;
