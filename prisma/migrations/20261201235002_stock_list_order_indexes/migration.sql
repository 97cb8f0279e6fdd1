-- DropIndex
DROP INDEX "Tube_location_idx";

-- CreateIndex
CREATE INDEX "Tube_typeId_label_idx" ON "Tube"("typeId", "label");

-- CreateIndex
CREATE INDEX "Tube_location_label_idx" ON "Tube"("location", "label");
