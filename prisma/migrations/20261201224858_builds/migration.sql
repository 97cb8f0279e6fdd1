-- CreateTable
CREATE TABLE "Build" (
    "id" INTEGER NOT NULL PRIMARY KEY AUTOINCREMENT,
    "name" TEXT NOT NULL,
    "notes" TEXT NOT NULL DEFAULT '',
    "heaterSupplies" TEXT NOT NULL,
    "bPlusVolts" REAL NOT NULL,
    "bPlusMilliamps" REAL NOT NULL,
    "negativeRailVolts" REAL,
    "negativeRailMilliamps" REAL,
    "balancePercent" REAL NOT NULL DEFAULT 5,
    "createdAt" DATETIME NOT NULL DEFAULT CURRENT_TIMESTAMP,
    "updatedAt" DATETIME NOT NULL
);

-- CreateTable
CREATE TABLE "BuildLine" (
    "id" INTEGER NOT NULL PRIMARY KEY AUTOINCREMENT,
    "buildId" INTEGER NOT NULL,
    "position" INTEGER NOT NULL,
    "kind" TEXT NOT NULL,
    "typeId" INTEGER NOT NULL,
    "count" INTEGER NOT NULL,
    "heaterSupply" INTEGER NOT NULL,
    "sparesPercent" REAL NOT NULL,
    "sparesSource" TEXT NOT NULL,
    "allowSubstitutes" BOOLEAN NOT NULL DEFAULT false,
    "acceptedSubstitutes" TEXT NOT NULL DEFAULT '',
    "plateLoadOhms" REAL,
    "couplingOhms" REAL,
    "gridReturnOhms" REAL,
    "cathodeOhms" REAL,
    "plateVolts" REAL,
    "plateMilliamps" REAL,
    "screenMilliamps" REAL,
    "loadMilliamps" REAL,
    CONSTRAINT "BuildLine_buildId_fkey" FOREIGN KEY ("buildId") REFERENCES "Build" ("id") ON DELETE CASCADE ON UPDATE CASCADE
);

-- CreateTable
CREATE TABLE "BuildAllocation" (
    "id" INTEGER NOT NULL PRIMARY KEY AUTOINCREMENT,
    "buildId" INTEGER NOT NULL,
    "lineId" INTEGER NOT NULL,
    "tubeId" INTEGER NOT NULL,
    "slots" TEXT NOT NULL,
    "status" TEXT NOT NULL DEFAULT 'reserved',
    "position" TEXT NOT NULL DEFAULT '',
    "createdAt" DATETIME NOT NULL DEFAULT CURRENT_TIMESTAMP,
    "installedAt" DATETIME,
    CONSTRAINT "BuildAllocation_buildId_fkey" FOREIGN KEY ("buildId") REFERENCES "Build" ("id") ON DELETE RESTRICT ON UPDATE CASCADE,
    CONSTRAINT "BuildAllocation_lineId_fkey" FOREIGN KEY ("lineId") REFERENCES "BuildLine" ("id") ON DELETE RESTRICT ON UPDATE CASCADE,
    CONSTRAINT "BuildAllocation_tubeId_fkey" FOREIGN KEY ("tubeId") REFERENCES "Tube" ("id") ON DELETE CASCADE ON UPDATE CASCADE
);

-- CreateIndex
CREATE UNIQUE INDEX "Build_name_key" ON "Build"("name");

-- CreateIndex
CREATE INDEX "BuildLine_buildId_position_idx" ON "BuildLine"("buildId", "position");

-- CreateIndex
CREATE UNIQUE INDEX "BuildAllocation_tubeId_key" ON "BuildAllocation"("tubeId");

-- CreateIndex
CREATE INDEX "BuildAllocation_buildId_idx" ON "BuildAllocation"("buildId");

-- CreateIndex
CREATE INDEX "BuildAllocation_lineId_idx" ON "BuildAllocation"("lineId");
